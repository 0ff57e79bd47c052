import "server-only";
import { and, count, eq, gt, lt } from "drizzle-orm";
import { db } from "../client";
import { signInAttempts } from "../schema";

/** Failed attempts for a key within the window. Stored in MariaDB so a restart forgets nothing. */
export async function failuresSince(key: string, since: Date): Promise<number> {
  const [r] = await db().select({ n: count() }).from(signInAttempts).where(and(eq(signInAttempts.key, key), gt(signInAttempts.at, since)));
  return r?.n ?? 0;
}

export async function recordFailure(keys: string[]): Promise<void> {
  await db().insert(signInAttempts).values(keys.map((key) => ({ key })));
}

export async function clearFailures(key: string): Promise<void> {
  await db().delete(signInAttempts).where(eq(signInAttempts.key, key));
}

export async function pruneAttempts(before: Date): Promise<void> {
  await db().delete(signInAttempts).where(lt(signInAttempts.at, before));
}
