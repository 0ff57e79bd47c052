import "server-only";
import { env } from "@/lib/env";
import { db } from "@/db/client";
import { getCheckRow } from "@/db/queries/garage";
import { mentorSharesForCheck, usersByIds } from "@/db/queries/clubs";
import { createAuthToken, getCredentialsByEmail } from "@/db/queries/users";
import type { notices } from "@/db/schema";

type Notice = typeof notices.$inferSelect;
export type Composed = { subject: string; body: string } | null;

const link = (path: string, token: string) => `${env().NEXTAUTH_URL}${path}?token=${encodeURIComponent(token)}`;

/**
 * A notice's last word before it is sent; null drops it. Decided at send time, not when queued:
 * - a password-reset or sign-in-link request was queued without looking the address up (so the
 *   request took the same time either way); here the account is found and the one-time link made,
 *   or, with no account, nothing is sent;
 * - a notice about a check goes only to someone who can still read it and still wants notices: a
 *   share withdrawn or a mentor removed after it was queued stops it (OWASP ASVS 5.0 V8
 *   Authorization, checked at the moment of use).
 */
export async function composeAtSend(n: Notice): Promise<Composed> {
  if ((n.kind === "reset" || n.kind === "signin") && n.body === "") {
    const u = await getCredentialsByEmail(n.toEmail);
    if (!u) return null;
    if (n.kind === "reset") {
      const token = await createAuthToken(u.id, "reset", 60);
      return { subject: "Choose a new Lashwright password", body: `To choose a new password, open:\n${link("/reset-password", token)}\n\nThe link works once, for an hour. If you did not ask for it, ignore this message.` };
    }
    const token = await createAuthToken(u.id, "signin", 15);
    return { subject: "Your Lashwright sign-in link", body: `Open this link on the phone you want to sign in on:\n${link("/sign-in/link", token)}\n\nIt works once, for 15 minutes.` };
  }
  if (n.aboutCheckId) {
    if (!n.toUserId) return null;
    const [who] = await usersByIds([n.toUserId]);
    if (!who?.noticesByEmail) return null;
    const check = await getCheckRow(db(), n.aboutCheckId);
    if (!check) return null;
    if (check.ownerId !== n.toUserId && (await mentorSharesForCheck(db(), n.toUserId, n.aboutCheckId)).length === 0) return null;
  }
  return { subject: n.subject, body: n.body };
}
