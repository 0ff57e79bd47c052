import "server-only";
import { env } from "@/lib/env";
import { db } from "@/db/connection";
import { getCheckRow } from "@/db/queries/garage";
import { mentorSharesForCheck, usersByIds } from "@/db/queries/clubs";
import { takesNotices } from "@/db/queries/notices";
import type { NoticeRow } from "@/db/schema";
import { getCredentialsByEmail } from "@/db/queries/users";
import { issueToken } from "./account-changes";
import { digest } from "@/lib/mail/digest";
import { isAccountMail } from "@/lib/mail/kinds";

export type Composed = { subject: string; body: string } | null;

const link = (path: string, token: string) => `${env().NEXTAUTH_URL}${path}?token=${encodeURIComponent(token)}`;

/**
 * A queued mail's last word before it is sent, decided at send time, not when queued:
 * - a password-reset or sign-in-link request was queued without looking the address up (so the
 *   request took the same time either way); here the account is found and the one-time link made,
 *   or, with no account, nothing is sent;
 * - an invitation goes only to an address that has not asked for no more;
 * - a notice about a check goes only to someone who can still read it and still wants notices: a
 *   share withdrawn or a mentor removed after it was queued stops it (OWASP ASVS 5.0 V8
 *   Authorization, checked at the moment of use). The notices of one address that survive leave as
 *   one mail (lib/mail/digest.ts).
 * `keep` are the ids the mail carries, `drop` those that will never be sent.
 */
export async function composeGroup(group: NoticeRow[]): Promise<{ mail: Composed; keep: string[]; drop: string[] }> {
  const all = group.map((n) => n.id);
  const first = group[0]!;
  // account mail is sent whatever the notice setting: it is what the reader asked for, or must know
  if (isAccountMail(first.kind)) {
    const mail =
      (first.kind === "reset" || first.kind === "signin") && first.body === ""
        ? await accountLink(first)
        : { subject: first.subject, body: first.body };
    return mail ? { mail, keep: all, drop: [] } : { mail: null, keep: [], drop: all };
  }
  if (first.kind === "invite")
    return (await takesNotices(first.toEmail))
      ? { mail: { subject: first.subject, body: first.body }, keep: all, drop: [] }
      : { mail: null, keep: [], drop: all };

  const readable = new Map<string, Promise<boolean>>();
  const canRead = (userId: string, checkId: string) => {
    const key = `${userId}:${checkId}`;
    let p = readable.get(key);
    if (!p) readable.set(key, (p = mayRead(userId, checkId)));
    return p;
  };
  const userIds = [...new Set(group.map((n) => n.toUserId).filter((id): id is string => !!id))];
  const wanting = new Set((await usersByIds(userIds)).filter((u) => u.noticesByEmail).map((u) => u.id));
  const keep: NoticeRow[] = [];
  const drop: string[] = [];
  for (const n of group) {
    let ok = true;
    if (n.aboutCheckId) ok = !!n.toUserId && wanting.has(n.toUserId) && (await canRead(n.toUserId, n.aboutCheckId));
    else if (n.toUserId) ok = wanting.has(n.toUserId);
    if (ok) keep.push(n);
    else drop.push(n.id);
  }
  if (!keep.length) return { mail: null, keep: [], drop };
  return { mail: digest(keep, `${env().NEXTAUTH_URL}/`), keep: keep.map((n) => n.id), drop };
}

async function mayRead(userId: string, checkId: string): Promise<boolean> {
  const check = await getCheckRow(db(), checkId);
  if (!check) return false;
  return check.ownerId === userId || (await mentorSharesForCheck(db(), userId, checkId)).length > 0;
}

async function accountLink(n: NoticeRow): Promise<Composed> {
  const u = await getCredentialsByEmail(n.toEmail);
  if (!u) return null;
  if (n.kind === "reset") {
    const token = await issueToken(u.id, "reset", 60);
    return {
      subject: "Choose a new Lashwright password",
      body: `To choose a new password, open:\n${link("/reset-password", token)}\n\nThe link works once, for an hour. If you did not ask for it, ignore this message.`,
    };
  }
  const token = await issueToken(u.id, "signin", 15);
  return {
    subject: "Your Lashwright sign-in link",
    body: `Open this link on the phone you want to sign in on:\n${link("/sign-in/link", token)}\n\nIt works once, for 15 minutes.`,
  };
}
