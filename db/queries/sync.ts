import "server-only";
import { and, eq, gt, inArray, lte, sql } from "drizzle-orm";
import { forbidden } from "@/lib/errors";
import { db, type Tx } from "../client";
import { checks, comments, engines, readings, rejectedMutations, syncClients, tombstones, trayItems } from "../schema";
import { checkToApi, engineToApi, readingToApi, trayToApi } from "./garage";
import type { AnyMySqlColumn } from "drizzle-orm/mysql-core";

/** The client row, locked for the push; created on first sight, refused if another user owns it. */
export async function lockClient(tx: Tx, clientId: string, userId: string): Promise<number> {
  await tx.insert(syncClients).values({ id: clientId, userId }).onDuplicateKeyUpdate({ set: { id: sql`id` } });
  const [c] = await tx.select().from(syncClients).where(eq(syncClients.id, clientId)).for("update");
  if (!c || c.userId !== userId) throw forbidden("This device belongs to another account");
  return c.lastMutationId;
}

/**
 * The device's last applied id, in the push's transaction. This row write (the id always moves up)
 * is what decides two pushes of one device racing on two nodes: the cluster lets one commit and
 * the other retries, rereads the id and skips what the first applied. The lock lockClient takes
 * only orders pushes on one node.
 */
export async function setLastMutation(tx: Tx, clientId: string, id: number) {
  await tx.update(syncClients).set({ lastMutationId: id }).where(eq(syncClients.id, clientId));
}

export async function recordRejected(tx: Tx, clientId: string, mutationId: number, name: string, reason: string) {
  await tx.insert(rejectedMutations).values({ clientId, mutationId, name: name.slice(0, 60), reason: reason.slice(0, 500) }).onDuplicateKeyUpdate({ set: { reason: reason.slice(0, 500) } });
}

/** The refusals already recorded among these ids: a push sent again after a lost answer gets them again. */
export async function rejectedAmong(tx: Tx, clientId: string, ids: number[]) {
  if (ids.length === 0) return [];
  return tx
    .select({ id: rejectedMutations.mutationId, name: rejectedMutations.name, reason: rejectedMutations.reason })
    .from(rejectedMutations)
    .where(and(eq(rejectedMutations.clientId, clientId), inArray(rejectedMutations.mutationId, ids)))
    .orderBy(rejectedMutations.mutationId);
}

export async function rejectedFor(clientId: string, after: number) {
  return db().select({ id: rejectedMutations.mutationId, name: rejectedMutations.name, reason: rejectedMutations.reason }).from(rejectedMutations).where(and(eq(rejectedMutations.clientId, clientId), gt(rejectedMutations.mutationId, after)));
}

export async function clientOwner(clientId: string) {
  const [c] = await db().select().from(syncClients).where(eq(syncClients.id, clientId)).limit(1);
  return c;
}

/**
 * What changed for one owner after their cursor, read in the caller's (read-only) transaction.
 * The owner's counter is read first and that read fixes the transaction's snapshot, so every row
 * stamped at or below it is visible and nothing above it is returned. On a cluster the first read
 * waits until this node has applied every write committed anywhere before it (wsrep_sync_wait;
 * without Galera it has no effect), so a change made through another node is in the next pull.
 * `after` null, or ahead of the counter (a restored database), is a full pull.
 * Nothing changed: one primary-key read. Otherwise one (owner_id, version) index range per table,
 * plus the owner's checks for the comments on them.
 */
export async function changesSince(tx: Tx, userId: string, after: number | null) {
  const [[counter]] = (await tx.execute(sql`SET STATEMENT wsrep_sync_wait = 1 FOR SELECT version FROM owner_versions WHERE owner_id = ${userId}`)) as unknown as [{ version: number | string }[]];
  const upTo = Number(counter?.version ?? 0);
  const from = after !== null && after <= upTo ? after : null;
  if (from === upTo) return { upTo, full: false, engines: [], checks: [], readings: [], tray: [], comments: [], tombstones: [] };
  const range = (t: { version: AnyMySqlColumn }) => (from === null ? lte(t.version, upTo) : and(gt(t.version, from), lte(t.version, upTo)));
  // one connection: the queries run one after another, in the same snapshot
  const es = await tx.select().from(engines).where(and(eq(engines.ownerId, userId), range(engines)));
  const cs = await tx.select().from(checks).where(and(eq(checks.ownerId, userId), range(checks)));
  const rs = await tx.select().from(readings).where(and(eq(readings.ownerId, userId), range(readings)));
  const ts = await tx.select().from(trayItems).where(and(eq(trayItems.ownerId, userId), range(trayItems)));
  const cms = await tx
    .select({ id: comments.id, checkId: comments.checkId, authorId: comments.authorId, valve: comments.valve, body: comments.body, createdAt: comments.createdAt, version: comments.version })
    .from(comments)
    .innerJoin(checks, eq(checks.id, comments.checkId))
    .where(and(eq(checks.ownerId, userId), range(comments)));
  const tomb = await tx.select({ entity: tombstones.entity, id: tombstones.entityId, version: tombstones.version }).from(tombstones).where(and(eq(tombstones.ownerId, userId), range(tombstones)));
  return { upTo, full: from === null, engines: es.map(engineToApi), checks: cs.map(checkToApi), readings: rs.map(readingToApi), tray: ts.map(trayToApi), comments: cms, tombstones: tomb };
}
