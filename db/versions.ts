import "server-only";
import { changeVersions } from "./schema";
import type { Db } from "./client";

type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];

/** Take the next value of the global change counter inside the caller's transaction. */
export async function nextVersion(tx: Db | Tx): Promise<number> {
  const [row] = await tx.insert(changeVersions).values({}).$returningId();
  return row!.version;
}
