import "server-only";
import { transaction, type Executor, type Tx } from "./client";
import { changeVersions } from "./schema";
import { DomainError } from "@/lib/errors";

export type { Tx };

/** Take the next value of the global change counter inside the caller's transaction. */
export async function nextVersion(tx: Executor): Promise<number> {
  const [row] = await tx.insert(changeVersions).values({}).$returningId();
  return row!.version;
}

/**
 * Run a write in a transaction that carries one new change version for every row it touches. When
 * the write's rules refuse it (a domain error) after it took locks, the refused work rolls back in
 * a savepoint but the version row commits, so pulls never wait on a gap in the version sequence
 * (stableCursor waits up to 30 s for a missing number); the refusal is thrown after the commit.
 */
export async function versioned<T>(fn: (tx: Tx, version: number) => Promise<T>): Promise<T> {
  let refused: DomainError | undefined;
  const out = await transaction(async (tx) => {
    const version = await nextVersion(tx);
    try {
      return await tx.transaction((sp) => fn(sp, version));
    } catch (e) {
      if (!(e instanceof DomainError)) throw e;
      refused = e;
      return undefined;
    }
  });
  if (refused) throw refused;
  return out as T;
}
