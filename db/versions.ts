import "server-only";
import { eq, sql } from "drizzle-orm";
import type { ResultSetHeader } from "mysql2";
import { transaction, type Executor, type Tx } from "./connection";
import { ownerVersions } from "./schema";

export type { Tx };

/**
 * Change versions: one counter per owner of synced rows (README "Scaling").
 *
 * A write takes the next value of its owner's counter inside its own transaction and stamps every
 * row of that owner it changes with it; a pull reads the owner's counter and returns the rows
 * stamped above the phone's cursor. Why this holds on a multi-primary cluster (Galera):
 * - Every writer of an owner writes that owner's counter row, so two such writers on two nodes
 *   cannot both commit (the cluster certifies row writes and fails one with a deadlock error, which
 *   is retried); the counter's values therefore commit in order, on every node.
 * - A row stamped V commits together with the counter reaching V, so a pull that reads the counter
 *   at V sees every row stamped V or lower: there are no gaps to wait on (a global AUTO_INCREMENT
 *   steps by the cluster size and commits out of order, which needed a wait of up to 30 s).
 * - A refused or rolled-back write takes its counter value back with it.
 * The cost of a pull follows the owner's own rows: one primary-key read when nothing changed, and
 * (owner_id, version) index ranges otherwise, however many other owners write.
 */
export async function nextVersion(tx: Executor, ownerId: string): Promise<number> {
  // one statement: LAST_INSERT_ID(expr) hands the new value back as the result's insertId
  const [r] = (await tx.execute(
    sql`INSERT INTO owner_versions (owner_id, version) VALUES (${ownerId}, LAST_INSERT_ID(1)) ON DUPLICATE KEY UPDATE version = LAST_INSERT_ID(version + 1)`,
  )) as unknown as [ResultSetHeader];
  return Number(r.insertId);
}

/** The owner's counter as this transaction sees it (0 before their first write). */
export async function currentVersion(tx: Executor, ownerId: string): Promise<number> {
  const [row] = await tx
    .select({ v: ownerVersions.version })
    .from(ownerVersions)
    .where(eq(ownerVersions.ownerId, ownerId));
  return row?.v ?? 0;
}

/**
 * Run a write in a transaction stamped with the caller's next version. Rows of another owner
 * written in it (a mentor's comment on a member's check, shims handed over to a borrower's tray)
 * take `nextVersion(tx, theirId)` in the same transaction. A refusal rolls everything back.
 */
export async function versioned<T>(ownerId: string, fn: (tx: Tx, version: number) => Promise<T>): Promise<T> {
  return transaction(async (tx) => fn(tx, await nextVersion(tx, ownerId)));
}
