import "server-only";
import { domainErrorOf } from "@/lib/errors";
import { rememberDevice } from "./device-cookie";
import { hashPassword, hashRefusals, needsRehash } from "./password";
import { signInSucceeded } from "./throttle";
import { upgradeHash } from "./account-changes";

/**
 * What a right password leads to, besides the session: the tries counted against it are forgotten,
 * a hash made before argon2id (or at weaker parameters) is replaced while the password is at hand
 * (OWASP Password Storage Cheat Sheet, upgrading legacy hashes), and the browser is remembered as
 * one the owner uses (device cookie).
 */
export async function passwordAccepted(
  u: { id: string; email: string; passwordHash: string | null },
  password: string,
  address: string | null,
): Promise<void> {
  await signInSucceeded(u.email.toLowerCase(), address);
  if (u.passwordHash && needsRehash(u.passwordHash)) {
    try {
      await upgradeHash(u.id, u.passwordHash, await hashPassword(password));
    } catch (e) {
      // the hashing queue is full: the old hash still works, and the next sign-in upgrades it
      if (domainErrorOf(e)?.kind !== "overloaded") throw e;
      const seen = hashRefusals.getStore();
      if (seen) {
        seen.retryAfterSeconds = null;
        seen.undo = [];
      }
    }
  }
  await rememberDevice(u.email);
}
