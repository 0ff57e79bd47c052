import "server-only";
import { and, count, eq, gt, inArray, lt } from "drizzle-orm";
import { db } from "../client";
import { signInAttempts } from "../schema";

/**
 * Attempts per key (an account, an e-mail address, a network address) within a window, stored in
 * MariaDB so a restart forgets nothing and every app instance sees the same counts.
 */

/**
 * Count an attempt before it is tried: insert it, then count the window including it. Each insert
 * commits on its own, so the attempt committed p-th sees at least p rows: however many arrive at
 * once, at most `limit` of them get a count within the limit. An attempt over the limit is removed
 * again, so a flood against one key does not grow the table. Returns the keys over their limit.
 */
export async function claimAttempts(keys: { key: string; limit: number }[], since: Date): Promise<string[]> {
  if (keys.length === 0) return [];
  const rows = keys.map((k) => ({ id: crypto.randomUUID(), key: k.key }));
  await db().insert(signInAttempts).values(rows);
  const counts = await Promise.all(keys.map((k) => failuresSince(k.key, since)));
  const over = keys.filter((k, i) => counts[i]! > k.limit).map((k) => k.key);
  if (over.length) await db().delete(signInAttempts).where(inArray(signInAttempts.id, rows.map((r) => r.id)));
  return over;
}

export async function failuresSince(key: string, since: Date): Promise<number> {
  const [r] = await db().select({ n: count() }).from(signInAttempts).where(and(eq(signInAttempts.key, key), gt(signInAttempts.at, since)));
  return r?.n ?? 0;
}

export async function clearFailures(key: string): Promise<void> {
  await db().delete(signInAttempts).where(eq(signInAttempts.key, key));
}

export async function pruneAttempts(before: Date): Promise<void> {
  await db().delete(signInAttempts).where(lt(signInAttempts.at, before));
}
