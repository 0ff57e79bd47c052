import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import { randomUUID } from "node:crypto";
import { availableParallelism } from "node:os";
import { hash, parseOptions, verify, type Options } from "@node-rs/argon2";
import bcrypt from "bcryptjs";
import { overloaded } from "@/lib/errors";
import { log } from "./log";
import { Slots, watchSlots } from "./slots";

/**
 * Password hashing, off the event loop and capped. Argon2id with the OWASP Password Storage Cheat
 * Sheet's parameters (m = 19456 KiB, t = 2, p = 1); the native binding runs each hash on libuv's
 * thread pool, so a request that hashes leaves the event loop free for everyone else's requests.
 * Hashes older accounts still hold (bcrypt) keep verifying, and are replaced at the next successful
 * sign-in (needsRehash). Server-only: the browser never hashes, and lib/ holds no native code.
 */
export const ARGON2: Options = {
  algorithm: 2, // Argon2id (a const enum in the binding's types, which isolatedModules cannot read)
  memoryCost: 19_456,
  timeCost: 2,
  parallelism: 1,
};

/**
 * At most this many hashes at once: one core is left to the event loop, and at least one of libuv's
 * four threads to file and DNS work; each hash also holds 19 MiB while it runs.
 */
export const HASHING_AT_ONCE = Math.min(3, Math.max(1, availableParallelism() - 1));
/**
 * At most this many wait for a turn (a hash takes about 40 ms here, so the last waits well under a
 * second); beyond it the caller is answered 503 with Retry-After at once rather than queued without
 * end (OWASP ASVS 5.0 V2 Validation and Business Logic: anti-automation; DEVELOPERS.md "Fair use").
 */
export const HASH_QUEUE_LIMIT = 16 * HASHING_AT_ONCE;

/**
 * Set while a sign-in is handled: a refused hash is noted, so the route answers 503 with Retry-After,
 * and the tries counted for it are given back (`undo`), since no password was checked.
 */
export type HashWatch = { retryAfterSeconds: number | null; undo: (() => Promise<void>)[] };
export const hashRefusals = new AsyncLocalStorage<HashWatch>();

/** How long a hash may wait for its turn before the caller is answered busy (nothing waits unbounded). */
export const HASH_WAIT_MS = 10_000;

const hashSlots = watchSlots(
  "password_hash",
  new Slots(HASHING_AT_ONCE, HASH_QUEUE_LIMIT, HASH_WAIT_MS, () => {
    // a sign-in being handled notes the refusal, so its route answers 503 and gives the tries back
    const seen = hashRefusals.getStore();
    if (seen) seen.retryAfterSeconds = 1;
    return overloaded("Too many sign-ins at once: try again in a moment", 1);
  }),
);

function turn<T>(work: () => Promise<T>): Promise<T> {
  return hashSlots.run(() => {
    count();
    return work();
  });
}

/**
 * Test-only: with LASHWRIGHT_COUNT_HASHES=1 every hash actually computed prints one line, so a test
 * can count the work a flood caused (counting work, not milliseconds). Nothing about the password.
 */
const COUNT = process.env.LASHWRIGHT_COUNT_HASHES === "1";
// at info whatever LOG_LEVEL says: the line is what the test counts
const counter = COUNT ? log.child({}, { level: "info" }) : null;
function count() {
  counter?.info("[password] hash computed");
}

export function hashPassword(plain: string): Promise<string> {
  return turn(() => hash(plain, ARGON2));
}

export function verifyPassword(plain: string, stored: string): Promise<boolean> {
  if (stored.startsWith("$argon2")) return turn(() => verify(stored, plain).catch(() => false));
  // accounts made before argon2id: bcryptjs runs on the event loop (in slices), once per account
  if (/^\$2[aby]\$\d\d\$/.test(stored)) return turn(() => bcrypt.compare(plain, stored));
  return Promise.resolve(false);
}

/** True when a stored hash is not argon2id at today's parameters: replace it at the next sign-in. */
export function needsRehash(stored: string): boolean {
  if (!stored.startsWith("$argon2id$")) return true;
  try {
    const o = parseOptions(stored);
    return o.memoryCost < ARGON2.memoryCost! || o.timeCost < ARGON2.timeCost! || o.parallelism !== ARGON2.parallelism;
  } catch {
    return true;
  }
}

let dummy: Promise<string> | undefined;
/**
 * A hash of a password nobody knows, at today's parameters, to check against when the account does
 * not exist (so the time taken says nothing). Made once, outside the queue; made again if that failed.
 */
export function dummyHash(): Promise<string> {
  if (!dummy) count();
  dummy ??= hash(randomUUID(), ARGON2).catch((e: unknown) => {
    dummy = undefined;
    throw e;
  });
  return dummy;
}
