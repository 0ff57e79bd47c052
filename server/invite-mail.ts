import "server-only";
import { env } from "@/lib/env";
import { tooMany } from "@/lib/errors";
import { inert } from "@/lib/mail/inert";
import type { Role } from "@/db/schema";
import { budget, type Budget } from "./budgets";
import { queueNotices } from "./notices";

/**
 * Invitations are the one mail a user can send to an address of their choosing, so they are what a
 * spammer would use Lashwright for: each is counted against its sender and its recipient, and what
 * the sender typed (their name, the club's name) reaches the stranger only as inert quoted text in
 * the body, never in the subject and never as a link (lib/mail/inert.ts). OWASP ASVS 5.0 V2 Validation
 * and Business Logic (anti-automation limits on functions that cost others), V1 Encoding.
 */
// 20 invitations per account per day: a club's night of sign-ups, not a mailing list
const bySender = budget({ name: "invite:sender", points: 20, seconds: 86_400 });
// 3 per address per day from anyone: no stranger's inbox is a target however many accounts aim at it
const byAddress = budget({ name: "invite:to", points: 3, seconds: 86_400 });

const hours = (s: number) => Math.max(1, Math.ceil(s / 3600));

async function spend(b: Budget, key: string, message: (wait: number) => string) {
  const r = await b.take(key);
  if (!r.ok) throw tooMany(message(r.retryAfterSeconds), r.retryAfterSeconds);
}

/**
 * Spend the invitation's share of both budgets before it is made, and hand the share back if
 * making it fails; `make` runs the write. Beyond a budget: 429 with Retry-After, nothing is stored
 * and nothing sent.
 */
export async function withInviteBudget<T>(senderId: string, email: string, make: () => Promise<T>): Promise<T> {
  const to = email.toLowerCase();
  await spend(
    bySender,
    senderId,
    (w) =>
      `You have sent the invitations one account may send in a day (${bySender.spec.points}). Try again in ${hours(w)} hours.`,
  );
  try {
    await spend(
      byAddress,
      to,
      (w) => `This address has had enough invitations for today. Try again in ${hours(w)} hours.`,
    );
  } catch (e) {
    await bySender.refund(senderId);
    throw e;
  }
  try {
    return await make();
  } catch (e) {
    await Promise.all([bySender.refund(senderId), byAddress.refund(to)]);
    throw e;
  }
}

export async function sendInvitation(a: {
  email: string;
  inviterName: string;
  clubName: string;
  role: Role;
  token: string;
}) {
  await queueNotices([
    {
      toEmail: a.email,
      kind: "invite",
      // fixed words only: a subject is what an inbox shows before anything is opened
      subject: "A Lashwright member invites you to join a club",
      body: `Someone using Lashwright, who gave their name as ${inert(a.inviterName)}, invites you to join the club ${inert(a.clubName)} as a ${a.role}. The names in quotes are as the sender typed them; Lashwright has not checked them.\n\nTo accept, open this link (sign up first if you are new):\n${env().NEXTAUTH_URL}/invite?token=${a.token}\n\nThe invitation is valid for 14 days. If you do not know who sent it, ignore this message.`,
    },
  ]);
}
