import "server-only";
import { clearFailures, failuresSince, recordFailure } from "@/db/queries/throttle";

/**
 * Sign-in throttling: at most 5 failed attempts per account and 20 per address in 15 minutes
 * (OWASP Authentication Cheat Sheet: limit failed attempts per account and per source).
 */
export const THROTTLE = { windowMinutes: 15, perAccount: 5, perAddress: 20 } as const;

const accountKey = (email: string) => `acct:${email}`;
const addressKey = (addr: string) => `addr:${addr}`;

export async function isThrottled(email: string, address: string): Promise<boolean> {
  const since = new Date(Date.now() - THROTTLE.windowMinutes * 60_000);
  const [a, b] = await Promise.all([failuresSince(accountKey(email), since), failuresSince(addressKey(address), since)]);
  return a >= THROTTLE.perAccount || b >= THROTTLE.perAddress;
}

export async function noteFailure(email: string, address: string): Promise<void> {
  await recordFailure([accountKey(email), addressKey(address)]);
}

export async function noteSuccess(email: string): Promise<void> {
  await clearFailures(accountKey(email));
}

/**
 * The caller's address. Behind a proxy that sets X-Forwarded-For, its first entry; without one, all
 * callers share one bucket and the per-account limit still holds.
 */
export function clientAddress(headers: Headers | Record<string, string | string[] | undefined> | undefined): string {
  const get = (name: string): string | undefined => {
    if (!headers) return undefined;
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const v = headers[name];
    return Array.isArray(v) ? v[0] : v;
  };
  return (get("x-forwarded-for")?.split(",")[0]?.trim() || get("x-real-ip") || "direct").slice(0, 64);
}

/**
 * A plain rate limit for mail a caller can ask for (a resent confirmation link): true and counted
 * when the key has had fewer than `limit` in the window, false otherwise. Counted whether or not
 * the address has an account, so the answer tells nothing about it.
 */
export async function spend(key: string, limit: number, windowMinutes: number): Promise<boolean> {
  if ((await failuresSince(key, new Date(Date.now() - windowMinutes * 60_000))) >= limit) return false;
  await recordFailure([key]);
  return true;
}
