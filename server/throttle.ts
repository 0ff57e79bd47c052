import "server-only";
import { env } from "@/lib/env";
import { claimAttempts, clearFailures } from "@/db/queries/throttle";

/**
 * Throttles, counted before the work they guard (OWASP ASVS 5.0 V6 Authentication; NIST SP 800-63B
 * section 5.2.2, rate limiting): sign-in at most 5 tries per account and 20 per network address in
 * 15 minutes; e-mails asked for (sign-up, password reset, sign-in link) at most 5 per e-mail address
 * and 20 per network address in 15 minutes (common practice). A locked account can still be reached
 * by an e-mail link, so a stranger's wrong guesses lock nobody out for good.
 */
export const THROTTLE = { windowMinutes: 15, perAccount: 5, perAddress: 20, mailsPerEmail: 5, mailsPerAddress: 20 } as const;

const since = () => new Date(Date.now() - THROTTLE.windowMinutes * 60_000);
const accountKey = (email: string) => `acct:${email}`;

/** Count a sign-in try; true when it must be refused without checking the password. */
export async function signInThrottled(email: string, address: string | null): Promise<boolean> {
  const keys: { key: string; limit: number }[] = [{ key: accountKey(email), limit: THROTTLE.perAccount }];
  if (address) keys.push({ key: `addr:${address}`, limit: THROTTLE.perAddress });
  return (await claimAttempts(keys, since())).length > 0;
}

/** A right password forgets the account's earlier tries (the address's stay counted). */
export async function signInSucceeded(email: string): Promise<void> {
  await clearFailures(accountKey(email));
}

/** Count a request that sends e-mail to `email`; true when it must be refused. */
export async function mailThrottled(email: string, address: string | null): Promise<boolean> {
  const keys: { key: string; limit: number }[] = [{ key: `mail:${email}`, limit: THROTTLE.mailsPerEmail }];
  if (address) keys.push({ key: `mailaddr:${address}`, limit: THROTTLE.mailsPerAddress });
  return (await claimAttempts(keys, since())).length > 0;
}

type HeaderBag = Headers | Record<string, string | string[] | undefined> | undefined;

/**
 * The caller's network address, or null when it cannot be known. Behind TRUSTED_PROXIES proxies,
 * each appends the address it saw to X-Forwarded-For, so the N-th entry from the right is the one
 * our nearest trusted proxy saw; anything left of it is the caller's own words. With no proxy the
 * header is not believed at all (Next fills it from the socket only when the caller sent none).
 */
export function clientAddress(headers: HeaderBag): string | null {
  const hops = env().TRUSTED_PROXIES;
  if (hops === 0 || !headers) return null;
  const raw = headers instanceof Headers ? headers.get("x-forwarded-for") : headers["x-forwarded-for"];
  const list = (Array.isArray(raw) ? raw.join(",") : (raw ?? "")).split(",").map((s) => s.trim()).filter(Boolean);
  const addr = list[list.length - hops];
  return addr ? addr.slice(0, 64) : null;
}

/**
 * A plain rate limit for mail a caller can ask for (a resent confirmation link): true and counted
 * when the key has had fewer than `limit` in the window, false otherwise. Counted whether or not
 * the address has an account, so the answer tells nothing about it.
 */
export async function spend(key: string, limit: number, windowMinutes: number): Promise<boolean> {
  // counted first, then compared, so requests sent at once cannot all slip under the limit
  return (await claimAttempts([{ key, limit }], new Date(Date.now() - windowMinutes * 60_000))).length === 0;
}
