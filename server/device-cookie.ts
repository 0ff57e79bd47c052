import "server-only";
import { createHmac, randomBytes, timingSafeEqual } from "node:crypto";
import { env } from "@/lib/env";

/**
 * Device cookies (OWASP "Slow Down Online Guessing Attacks with Device Cookies"): a browser that has
 * signed in to an account gets a cookie naming that account, signed with the server's secret. Its
 * later sign-in tries to that account are counted under that device's own budget, so a stranger who
 * spends the account-wide budget does not lock the owner out (NIST SP 800-63B 5.2.2: throttling must
 * not let an attacker deny the subscriber). Nobody can make one for an account they never signed in
 * to, and one cookie only ever vouches for the account it names.
 *
 * One cookie holds the entries for the last few accounts signed in on the browser:
 * `base64url(email).issuedAt.nonce.mac` joined by `~`, mac = HMAC-SHA256 over the rest.
 */
const ACCOUNTS_PER_BROWSER = 4;
const LIFETIME_DAYS = 365;

export const deviceCookieName = () =>
  env().NEXTAUTH_URL.startsWith("https:") ? "__Host-lashwright-device" : "lashwright-device";

let keyFor: { secret: string; key: Buffer } | undefined;
/** A key of its own, derived from NEXTAUTH_SECRET, so a device mac is never valid as anything else. */
async function macKey(): Promise<Buffer | null> {
  const { authOptions } = await import("./auth"); // the one place the secret (and its development stand-in) is chosen
  const secret = authOptions.secret;
  if (!secret) return null;
  if (keyFor?.secret !== secret)
    keyFor = { secret, key: createHmac("sha256", secret).update("lashwright device cookie v1").digest() };
  return keyFor.key;
}

const mac = (key: Buffer, body: string) => createHmac("sha256", key).update(body).digest("base64url");
const b64 = (s: string) => Buffer.from(s, "utf8").toString("base64url");

type Entry = { email: string; nonce: string; raw: string };

/** The entries of a cookie value that are genuine and not expired; anything else is dropped. */
async function entries(value: string | undefined): Promise<Entry[]> {
  const key = value ? await macKey() : null;
  if (!key || !value || value.length > 4096) return [];
  const out: Entry[] = [];
  for (const raw of value.split("~").slice(0, ACCOUNTS_PER_BROWSER)) {
    const parts = raw.split(".");
    if (parts.length !== 4) continue;
    const [who, issued, nonce, given] = parts as [string, string, string, string];
    const want = Buffer.from(mac(key, `${who}.${issued}.${nonce}`));
    const got = Buffer.from(given);
    if (got.length !== want.length || !timingSafeEqual(got, want)) continue;
    const issuedAt = parseInt(issued, 36);
    if (!(issuedAt > 0) || Date.now() / 1000 - issuedAt > LIFETIME_DAYS * 86_400) continue;
    out.push({ email: Buffer.from(who, "base64url").toString("utf8"), nonce, raw });
  }
  return out;
}

async function jar() {
  const { cookies } = await import("next/headers");
  return cookies();
}

/**
 * The device's id when this request carries a genuine device cookie for `email`, else null (also
 * outside a request, where there are no cookies to read).
 */
export async function trustedDevice(email: string): Promise<string | null> {
  let value: string | undefined;
  try {
    value = (await jar()).get(deviceCookieName())?.value;
  } catch {
    return null;
  }
  return (await entries(value)).find((e) => e.email === email.toLowerCase())?.nonce ?? null;
}

/** After a successful sign-in: a fresh entry for `email` (first), keeping the browser's others. */
export async function rememberDevice(address: string): Promise<void> {
  const email = address.toLowerCase();
  const key = await macKey();
  if (!key) return;
  const cookies = await jar().catch(() => null);
  if (!cookies) return;
  const kept = (await entries(cookies.get(deviceCookieName())?.value)).filter((e) => e.email !== email);
  const body = `${b64(email)}.${Math.floor(Date.now() / 1000).toString(36)}.${randomBytes(16).toString("base64url")}`;
  const value = [`${body}.${mac(key, body)}`, ...kept.map((e) => e.raw)].slice(0, ACCOUNTS_PER_BROWSER).join("~");
  cookies.set(deviceCookieName(), value, {
    httpOnly: true,
    secure: env().NEXTAUTH_URL.startsWith("https:"),
    sameSite: "lax",
    path: "/",
    maxAge: LIFETIME_DAYS * 86_400,
  });
}
