import "server-only";
import { and, eq, gt, lte, sql } from "drizzle-orm";
import { forbidden } from "@/lib/errors";
import { db, type Tx } from "../client";
import { changeVersions, checks, comments, engines, readings, rejectedMutations, syncClients, tombstones, trayItems } from "../schema";
import { checkToApi, engineToApi, readingToApi, trayToApi } from "./garage";
import type { AnyMySqlColumn } from "drizzle-orm/mysql-core";

/** The client row, locked for the push; created on first sight, refused if another user owns it. */
export async function lockClient(tx: Tx, clientId: string, userId: string): Promise<number> {
  await tx.insert(syncClients).values({ id: clientId, userId }).onDuplicateKeyUpdate({ set: { id: sql`id` } });
  const [c] = await tx.select().from(syncClients).where(eq(syncClients.id, clientId)).for("update");
  if (!c || c.userId !== userId) throw forbidden("This device belongs to another account");
  return c.lastMutationId;
}

export async function setLastMutation(tx: Tx, clientId: string, id: number) {
  await tx.update(syncClients).set({ lastMutationId: id }).where(eq(syncClients.id, clientId));
}

export async function recordRejected(tx: Tx, clientId: string, mutationId: number, name: string, reason: string) {
  await tx.insert(rejectedMutations).values({ clientId, mutationId, name: name.slice(0, 60), reason: reason.slice(0, 500) }).onDuplicateKeyUpdate({ set: { reason: reason.slice(0, 500) } });
}

export async function rejectedFor(clientId: string, after: number) {
  return db().select({ id: rejectedMutations.mutationId, name: rejectedMutations.name, reason: rejectedMutations.reason }).from(rejectedMutations).where(and(eq(rejectedMutations.clientId, clientId), gt(rejectedMutations.mutationId, after)));
}

export async function clientOwner(clientId: string) {
  const [c] = await db().select().from(syncClients).where(eq(syncClients.id, clientId)).limit(1);
  return c;
}

/**
 * The highest version V such that every change numbered V or below has committed or died. A
 * version is taken at the start of a write transaction and only becomes visible at its commit, so
 * a gap in the visible numbers is either still in flight or rolled back; a gap followed by a
 * version committed more than 30 s ago is taken as rolled back (writes here last well under 30 s).
 */
export async function stableCursor(from: number): Promise<number> {
  const rows = await db().select({ v: changeVersions.version, at: changeVersions.at }).from(changeVersions).where(gt(changeVersions.version, from)).orderBy(changeVersions.version);
  const settled = Date.now() - 30_000;
  let cursor = from;
  for (const r of rows) {
    if (r.v !== cursor + 1 && r.at.getTime() > settled) break;
    cursor = r.v;
  }
  return cursor;
}

/** Everything of the user's that changed after `after` up to `upTo`, and what was deleted. */
export async function changesFor(userId: string, after: number, upTo: number) {
  const range = (t: { version: AnyMySqlColumn }) => and(gt(t.version, after), lte(t.version, upTo));
  const [es, cs, rs, ts, cms, tomb] = await Promise.all([
    db().select().from(engines).where(and(eq(engines.ownerId, userId), range(engines))),
    db().select().from(checks).where(and(eq(checks.ownerId, userId), range(checks))),
    db().select().from(readings).where(and(eq(readings.ownerId, userId), range(readings))),
    db().select().from(trayItems).where(and(eq(trayItems.ownerId, userId), range(trayItems))),
    db()
      .select({ id: comments.id, checkId: comments.checkId, authorId: comments.authorId, valve: comments.valve, body: comments.body, createdAt: comments.createdAt, version: comments.version })
      .from(comments)
      .innerJoin(checks, eq(checks.id, comments.checkId))
      .where(and(eq(checks.ownerId, userId), gt(comments.version, after), lte(comments.version, upTo))),
    db().select({ entity: tombstones.entity, id: tombstones.entityId, version: tombstones.version }).from(tombstones).where(and(eq(tombstones.ownerId, userId), range(tombstones))),
  ]);
  return { engines: es.map(engineToApi), checks: cs.map(checkToApi), readings: rs.map(readingToApi), tray: ts.map(trayToApi), comments: cms, tombstones: tomb };
}
