import "server-only";
import { env } from "@/lib/env";
import { hashPassword } from "@/lib/auth/password";
import { consumeAuthToken, createAuthToken, createUser, getCredentialsByEmail, updateUser, bumpSessionGeneration } from "@/db/queries/users";
import { queueNotices } from "./notices";
import { spend } from "./throttle";
import { DomainError } from "@/lib/errors";

/** Account flows that send e-mail. Each answers the same whether or not the address has an account. */
const link = (path: string, token: string) => `${env().NEXTAUTH_URL}${path}?token=${encodeURIComponent(token)}`;

export async function signUp(input: { email: string; name: string; password: string }) {
  const existing = await getCredentialsByEmail(input.email);
  if (existing) {
    const token = await createAuthToken(existing.id, "reset", 60);
    await queueNotices([
      {
        toEmail: input.email,
        toUserId: existing.id,
        kind: "account-exists",
        subject: "You already have a Lashwright account",
        body: `Someone (perhaps you) tried to sign up with this address, which already has an account.\n\nTo choose a new password, open:\n${link("/reset-password", token)}\n\nIf it was not you, ignore this message.`,
      },
    ]);
    return;
  }
  const id = await createUser({ email: input.email, name: input.name, passwordHash: await hashPassword(input.password) });
  await sendVerification(id, input.email, input.name);
}

async function sendVerification(userId: string, email: string, name: string) {
  const token = await createAuthToken(userId, "verify", 24 * 60);
  await queueNotices([
    {
      toEmail: email,
      toUserId: userId,
      kind: "verify",
      subject: "Confirm your e-mail for Lashwright",
      body: `Welcome to Lashwright, ${name}.\n\nConfirm this address to sign in:\n${link("/verify", token)}\n\nThe link works once, for 24 hours.`,
    },
  ]);
}

/** Three confirmation mails per address in 15 minutes at most: enough for a slow inbox, no flood. */
export const RESEND_LIMIT = { count: 3, windowMinutes: 15 } as const;

/**
 * A new confirmation link for an account not yet confirmed; nothing for any other address, with
 * the same answer. Refused (throttled) when the address has had its share of mails for now.
 */
export async function resendVerification(email: string): Promise<void> {
  if (!(await spend(`resend:${email}`, RESEND_LIMIT.count, RESEND_LIMIT.windowMinutes)))
    throw new DomainError("throttled", `A link was sent to this address a short while ago. Check the inbox (and the spam folder), or ask again in ${RESEND_LIMIT.windowMinutes} minutes.`);
  const u = await getCredentialsByEmail(email);
  if (u && !u.emailVerifiedAt) await sendVerification(u.id, email, u.name);
}

export async function verifyEmail(token: string): Promise<boolean> {
  const userId = await consumeAuthToken(token, "verify");
  if (!userId) return false;
  await updateUser(userId, { emailVerifiedAt: new Date() });
  return true;
}

export async function requestPasswordReset(email: string) {
  const u = await getCredentialsByEmail(email);
  if (!u) return;
  const token = await createAuthToken(u.id, "reset", 60);
  await queueNotices([
    { toEmail: email, toUserId: u.id, kind: "reset", subject: "Choose a new Lashwright password", body: `To choose a new password, open:\n${link("/reset-password", token)}\n\nThe link works once, for an hour. If you did not ask for it, ignore this message.` },
  ]);
}

/** A new password ends every existing session (the generation goes up) and proves the address. */
export async function resetPassword(token: string, password: string): Promise<boolean> {
  const userId = await consumeAuthToken(token, "reset");
  if (!userId) return false;
  await updateUser(userId, { passwordHash: await hashPassword(password), emailVerifiedAt: new Date() });
  await bumpSessionGeneration(userId);
  return true;
}

export async function requestSignInLink(email: string) {
  const u = await getCredentialsByEmail(email);
  if (!u) return;
  const token = await createAuthToken(u.id, "signin", 15);
  await queueNotices([
    { toEmail: email, toUserId: u.id, kind: "signin", subject: "Your Lashwright sign-in link", body: `Open this link on the phone you want to sign in on:\n${link("/sign-in/link", token)}\n\nIt works once, for 15 minutes.` },
  ]);
}
