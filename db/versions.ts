import "server-only";
import { db, type Db } from "./client";
import { changeVersions } from "./schema";

export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

/** Take the next value of the global change counter inside the caller's transaction. */
export async function nextVersion(tx: Db | Tx): Promise<number> {
  const [row] = await tx.insert(changeVersions).values({}).$returningId();
  return row!.version;
}

/** Run a write in a transaction that carries one new change version for every row it touches. */
export function versioned<T>(fn: (tx: Tx, version: number) => Promise<T>): Promise<T> {
  return db().transaction(async (tx) => fn(tx, await nextVersion(tx)));
}
