import "server-only";
import { db, type Db } from "./client";
import { changeVersions } from "./schema";
import { Refused } from "./errors";

export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

/** Take the next value of the global change counter inside the caller's transaction. */
export async function nextVersion(tx: Db | Tx): Promise<number> {
  const [row] = await tx.insert(changeVersions).values({}).$returningId();
  return row!.version;
}

/**
 * Run a write in a transaction that carries one new change version for every row it touches. When
 * the write's rules refuse it (Refused) after it took locks, the refused work rolls back in a
 * savepoint but the version row commits, so pulls never wait on a gap in the version sequence
 * (stableCursor waits up to 30 s for a missing number); the refusal is thrown after the commit.
 */
export async function versioned<T>(fn: (tx: Tx, version: number) => Promise<T>): Promise<T> {
  let refused: Refused | undefined;
  const out = await db().transaction(async (tx) => {
    const version = await nextVersion(tx);
    try {
      return await tx.transaction((sp) => fn(sp, version));
    } catch (e) {
      if (!(e instanceof Refused)) throw e;
      refused = e;
      return undefined;
    }
  });
  if (refused) throw refused;
  return out as T;
}
