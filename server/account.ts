import "server-only";
import { env } from "@/lib/env";
import { hashPassword, verifyPassword } from "./password";
import { getCredentialsByEmail, getCredentialsById, tokenOwner } from "@/db/queries/users";
import { db } from "@/db/connection";
import { issueToken, markAddressProved, newAccount, replacePassword, spendToken } from "./account-changes";
import { queueNotices } from "./notices";
import { mailThrottled } from "./throttle";
import { budget } from "./budgets";
import { DomainError, invalid, tooMany } from "@/lib/errors";

/**
 * Account flows that send e-mail. Each answers the same, in the same time, whether or not the address
 * has an account (OWASP ASVS 5.0 V6 Authentication; NIST SP 800-63B on not revealing which accounts
 * exist): sign-up hashes the password on both paths, and a reset or sign-in link is only queued here,
 * the account being looked up when the queue sends it (server/notice-compose.ts).
 */
export const link = (path: string, token: string) => `${env().NEXTAUTH_URL}${path}?token=${encodeURIComponent(token)}`;

async function throttleMail(email: string, address: string | null) {
  const refused = await mailThrottled(email, address);
  if (refused)
    throw tooMany(
      `Too many e-mails asked for this address. Wait ${Math.ceil(refused.retryAfterSeconds / 60)} minutes and try again.`,
      refused.retryAfterSeconds,
    );
}

export async function signUp(input: { email: string; name: string; password: string }, address: string | null = null) {
  await throttleMail(input.email, address);
  // hashed on both paths: the time taken says nothing about whether the address has an account
  const passwordHash = await hashPassword(input.password);
  const existing = await getCredentialsByEmail(input.email);
  if (existing) {
    const token = await issueToken(existing.id, "reset", 60);
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
  const id = await newAccount({ email: input.email, name: input.name, passwordHash });
  await sendVerification(id, input.email);
}

/**
 * The confirmation mail goes to an address whose owner may never have heard of us: it carries no
 * word the sign-up chose (the name could be a lure with a link), only our own.
 */
async function sendVerification(userId: string, email: string) {
  const token = await issueToken(userId, "verify", 24 * 60);
  await queueNotices([
    {
      toEmail: email,
      toUserId: userId,
      kind: "verify",
      subject: "Confirm your e-mail for Lashwright",
      body: `Welcome to Lashwright.\n\nTo confirm this address, open the link and enter the password you chose when you signed up:\n${link("/verify", token)}\n\nThe link works once, for 24 hours. If you did not sign up, ignore this message: nobody can sign in with this address until it is confirmed, and the page behind the link lets you choose your own password instead.`,
    },
  ]);
}

/** Three confirmation mails per address in 15 minutes at most: enough for a slow inbox, no flood. */
export const RESEND_LIMIT = { count: 3, windowMinutes: 15 } as const;
const resends = budget({ name: "mail:resend", points: RESEND_LIMIT.count, seconds: RESEND_LIMIT.windowMinutes * 60 });

/**
 * A new confirmation link for an account not yet confirmed; nothing for any other address, with
 * the same answer. Refused (throttled) when the address has had its share of mails for now.
 */
export async function resendVerification(email: string): Promise<void> {
  const spent = await resends.take(email);
  if (!spent.ok)
    throw tooMany(
      `A link was sent to this address a short while ago. Check the inbox (and the spam folder), or ask again in ${RESEND_LIMIT.windowMinutes} minutes.`,
      spent.retryAfterSeconds,
    );
  const u = await getCredentialsByEmail(email);
  if (u && !u.emailVerifiedAt) await sendVerification(u.id, email);
}

/** Five password tries per account in 15 minutes on the confirmation page; then the link waits. */
export const VERIFY_TRY_LIMIT = { count: 5, windowMinutes: 15 } as const;
const verifyTries = budget({
  name: "verify:account",
  points: VERIFY_TRY_LIMIT.count,
  seconds: VERIFY_TRY_LIMIT.windowMinutes * 60,
});

/**
 * Confirms an address. The link proves the mailbox; the password proves that whoever holds the
 * mailbox also chose the account's password. Without the second, someone who signed up first with
 * another person's address would keep a working password once that person clicked the link (NIST
 * SP 800-63B 6.1.2: bind an authenticator only to a subscriber known to control it). A wrong or
 * missing password leaves the link usable, so the owner can still choose their own password.
 */
/** Confirms the address; answers it, so the page can sign the newcomer in with the password just proved. */
export async function verifyEmail(token: string, password: string | undefined): Promise<{ email: string }> {
  const bad = () => new DomainError("bad_request", "This link has expired or was already used", { code: "bad_token" });
  const userId = await tokenOwner(db(), token, "verify");
  if (!userId) throw bad();
  const u = await getCredentialsById(userId);
  if (!u) throw bad();
  if (u.passwordHash) {
    if (!password)
      throw invalid("Enter the password you chose when you signed up", {
        password: "missing: the one you chose when you signed up",
      });
    const spent = await verifyTries.take(userId);
    if (!spent.ok)
      throw tooMany(
        `Too many tries. Wait ${VERIFY_TRY_LIMIT.windowMinutes} minutes, or choose a new password instead.`,
        spent.retryAfterSeconds,
      );
    if (!(await verifyPassword(password, u.passwordHash)))
      throw invalid("That is not the password this account was made with", {
        password: "not the password chosen at sign-up",
      });
  }
  const used = await spendToken(token, "verify", { onlyFor: userId });
  if (used !== userId) throw bad();
  await markAddressProved(userId);
  // the caller holds the mailbox's link (and the password, where the account has one): the address is theirs to see
  return { email: u.email };
}

/**
 * The address's owner has just proved it through a link sent to it. If the account was never
 * confirmed, its password was chosen by whoever signed up, who need not be the owner: someone could
 * sign up first with another person's address and wait. So that password is removed, every session
 * ends, and the owner is told (NIST SP 800-63B: an authenticator is bound only once the subscriber
 * is known to control it).
 */
export async function proveAddress(userId: string): Promise<void> {
  const u = await getCredentialsById(userId);
  if (!u || u.emailVerifiedAt) return;
  await replacePassword(userId, null);
  if (!u.passwordHash) return;
  await queueNotices([
    {
      toEmail: u.email,
      toUserId: userId,
      kind: "password-removed",
      subject: "We removed a password from your Lashwright account",
      body: `Someone signed up with this address and chose a password before the address was confirmed. You have now proved the address is yours, so that password no longer works.\n\nTo sign in with a password, choose your own: ${env().NEXTAUTH_URL}/forgot-password\n\nIf you did sign up yourself, choose the password again the same way.`,
    },
  ]);
}

/** Queued without looking the address up: the queue finds the account, if any, when it sends. */
export async function requestPasswordReset(email: string, address: string | null = null) {
  await throttleMail(email, address);
  await queueNotices([{ toEmail: email, kind: "reset", subject: "", body: "" }]);
}

/**
 * A new password ends every existing session (the generation goes up), voids every other link still
 * pending for the account (reset, sign-in, confirmation), and proves the address.
 */
export async function resetPassword(token: string, password: string): Promise<boolean> {
  const userId = await spendToken(token, "reset");
  if (!userId || userId === "other") return false;
  await replacePassword(userId, await hashPassword(password));
  return true;
}

export async function requestSignInLink(email: string, address: string | null = null) {
  await throttleMail(email, address);
  await queueNotices([{ toEmail: email, kind: "signin", subject: "", body: "" }]);
}

/** The address a usable sign-in link is for (whoever holds the link read it in that inbox). */
export async function linkAccount(token: string): Promise<{ email: string } | null> {
  const userId = await tokenOwner(db(), token, "signin");
  const u = userId ? await getCredentialsById(userId) : undefined;
  return u ? { email: u.email } : null;
}
