import "server-only";
import { env } from "@/lib/env";
import { budget, type Budget } from "./budgets";
import { trustedDevice } from "./device-cookie";
import { hashRefusals } from "./password";
import { addressKey, socketAddress } from "./peer-address";
import { log } from "./log";

/**
 * Throttles for sign-in and for the mail a caller can ask for, counted before the work they guard
 * (OWASP ASVS 5.0 V6 Authentication; NIST SP 800-63B 5.2.2, rate limiting), on the shared budgets of
 * server/budgets.ts. Windows of 15 minutes (common practice).
 *
 * A limit never locks the rightful owner out: a browser that signed in to the account before carries
 * a device cookie (server/device-cookie.ts), and its tries are counted under that device's own budget
 * instead of the account-wide one and the network address's; a link already in the owner's inbox
 * works whatever these budgets say.
 */
const WINDOW = 15 * 60;

/** Tries at an account from browsers it does not know: 5 (a right password forgets them). */
const accountTries = budget({ name: "signin:account", points: 5, seconds: WINDOW });
/** Tries from one browser that signed in to the account before: 5, like the account's own. */
const deviceTries = budget({ name: "signin:device", points: 5, seconds: WINDOW });
/**
 * Failed tries from one network address, at any accounts: 20 (given back on success, so a club's
 * shared Wi-Fi is not held back by its members signing in). Each is a password hash, so this is
 * what stops one address from taking the server's hashing (a spray over many accounts).
 */
const addressTries = budget({ name: "signin:address", points: 20, seconds: WINDOW });
/** Mails asked for one e-mail address (sign-up, reset, sign-in link): 5, so nobody is mail-bombed. */
const mailsPerEmail = budget({ name: "mail:email", points: 5, seconds: WINDOW });
/** ...except from the owner's own browser, which has its own 5 (the owner can still ask for a link). */
const mailsPerDevice = budget({ name: "mail:device", points: 5, seconds: WINDOW });
/** Mails asked for from one network address, to any addresses: 20. */
const mailsPerAddress = budget({ name: "mail:address", points: 20, seconds: WINDOW });

export const THROTTLE = {
  windowMinutes: WINDOW / 60,
  perAccount: 5,
  perDevice: 5,
  perAddress: 20,
  mailsPerEmail: 5,
  mailsPerAddress: 20,
} as const;

export type Throttled = { retryAfterSeconds: number };

/**
 * Spend one unit of each budget in turn; when one refuses, the units already taken are given back
 * (nothing was done), and the wait asked for is returned.
 */
async function spendAll(parts: [Budget, string][]): Promise<Throttled | null> {
  const taken: [Budget, string][] = [];
  for (const [b, key] of parts) {
    const r = await b.take(key);
    if (!r.ok) {
      await Promise.all(taken.map(([t, k]) => t.refund(k)));
      return { retryAfterSeconds: r.retryAfterSeconds };
    }
    taken.push([b, key]);
  }
  return null;
}

/**
 * Count a sign-in try; non-null when it must be refused without checking the password. A browser
 * with a device cookie for this account is counted on its own; any other try on the address first
 * (so a spray from one address stops without touching the accounts it names), then on the account.
 */
export async function signInThrottled(email: string, address: string | null): Promise<Throttled | null> {
  const device = await trustedDevice(email);
  const parts: [Budget, string][] = device
    ? [[deviceTries, device]]
    : [...(address ? [[addressTries, address] as [Budget, string]] : []), [accountTries, email]];
  const refused = await spendAll(parts);
  // if the hash is then refused (queue full), these tries are given back: no password was checked
  if (!refused)
    hashRefusals.getStore()?.undo.push(() => Promise.all(parts.map(([b, k]) => b.refund(k))).then(() => undefined));
  return refused;
}

/** A right password forgets the earlier tries of whoever gave it, and gives the address its unit back. */
export async function signInSucceeded(email: string, address: string | null): Promise<void> {
  const device = await trustedDevice(email);
  if (device) return deviceTries.reset(device);
  await Promise.all([accountTries.reset(email), address ? addressTries.refund(address) : undefined]);
}

/** Count a request that sends e-mail to `email`; non-null when it must be refused. */
export async function mailThrottled(email: string, address: string | null): Promise<Throttled | null> {
  const device = await trustedDevice(email);
  if (device) return spendAll([[mailsPerDevice, device]]);
  return spendAll([...(address ? [[mailsPerAddress, address] as [Budget, string]] : []), [mailsPerEmail, email]]);
}

type HeaderBag = Headers | Record<string, string | string[] | undefined> | undefined;

let warned = false;
/**
 * The caller's network address (as a counting key: IPv6 by its /64), or null when it cannot be known.
 * With no trusted proxy (TRUSTED_PROXIES=0, the default) it is the address of the socket the request
 * came in on, which the server sets (server/peer-address.ts); X-Forwarded-For is then the caller's
 * own words and never read. Behind TRUSTED_PROXIES proxies, each appends the address it saw to
 * X-Forwarded-For, so the N-th entry from the right is the one our nearest trusted proxy saw;
 * anything left of it is the caller's own words.
 */
export function clientAddress(headers: HeaderBag): string | null {
  const hops = env().TRUSTED_PROXIES;
  if (hops === 0) {
    const addr = addressKey(socketAddress());
    if (!addr && !warned) {
      warned = true;
      log.warn("throttle: a request without a socket address: limits per network address do not hold for it");
    }
    return addr;
  }
  if (!headers) return null;
  const raw = headers instanceof Headers ? headers.get("x-forwarded-for") : headers["x-forwarded-for"];
  const list = (Array.isArray(raw) ? raw.join(",") : (raw ?? ""))
    .split(",")
    .map((s) => s.trim())
    .filter(Boolean);
  return addressKey(list[list.length - hops]);
}
