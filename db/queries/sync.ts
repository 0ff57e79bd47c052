import "server-only";
import { and, eq, gt, lte, sql } from "drizzle-orm";
import type { MutationArgs } from "@/lib/sync/mutations";
import type { ReadingInput } from "@/lib/schemas/records";
import { db } from "../client";
import { Refused } from "../errors";
import { changeVersions, checks, comments, engines, readings, rejectedMutations, syncClients, tombstones, trayItems } from "../schema";
import { checkToApi, engineToApi, engineToRow, readingToApi, trayToApi, writeReadings } from "./garage";
import type { Tx } from "../versions";
import type { AnyMySqlColumn } from "drizzle-orm/mysql-core";

/** A change the server refuses: recorded with its reason, and the queue moves on. */
export { Refused };

/** The client row, locked for the push; created on first sight, refused if another user owns it. */
export async function lockClient(tx: Tx, clientId: string, userId: string): Promise<number> {
  await tx.insert(syncClients).values({ id: clientId, userId }).onDuplicateKeyUpdate({ set: { id: sql`id` } });
  const [c] = await tx.select().from(syncClients).where(eq(syncClients.id, clientId)).for("update");
  if (!c || c.userId !== userId) throw new Refused("this device belongs to another account");
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

async function ownedEngine(tx: Tx, userId: string, engineId: string) {
  const [e] = await tx.select().from(engines).where(eq(engines.id, engineId)).limit(1);
  if (!e || e.ownerId !== userId) throw new Refused("no such engine");
  return e;
}

async function ownedCheck(tx: Tx, userId: string, checkId: string) {
  const [c] = await tx.select().from(checks).where(eq(checks.id, checkId)).limit(1);
  if (!c || c.ownerId !== userId) throw new Refused("no such check");
  return c;
}

export async function applyEnginePut(tx: Tx, userId: string, version: number, a: MutationArgs<"engine.put/1">) {
  const [e] = await tx.select({ ownerId: engines.ownerId }).from(engines).where(eq(engines.id, a.id)).limit(1);
  if (e && e.ownerId !== userId) throw new Refused("no such engine");
  const row = engineToRow(a);
  await tx.insert(engines).values({ id: a.id, ownerId: userId, ...row, version }).onDuplicateKeyUpdate({ set: { ...row, version } });
}

export async function applyEngineDelete(tx: Tx, userId: string, version: number, a: { id: string }) {
  const e = await ownedEngine(tx, userId, a.id).catch(() => null);
  if (!e) return; // already gone: deleting twice is harmless
  const cs = await tx.select({ id: checks.id }).from(checks).where(eq(checks.engineId, a.id));
  await tx.insert(tombstones).values([{ entity: "engine", entityId: a.id, ownerId: userId, version }, ...cs.map((c) => ({ entity: "check", entityId: c.id, ownerId: userId, version }))]);
  await tx.delete(engines).where(eq(engines.id, a.id));
}

export async function applyCheckPut(tx: Tx, userId: string, version: number, a: MutationArgs<"check.put/1">) {
  await ownedEngine(tx, userId, a.engineId);
  const [c] = await tx.select({ ownerId: checks.ownerId, engineId: checks.engineId }).from(checks).where(eq(checks.id, a.id)).limit(1);
  if (c && (c.ownerId !== userId || c.engineId !== a.engineId)) throw new Refused("no such check");
  const set = { odometer: a.odometer, measuredHot: a.measuredHot, notes: a.notes ?? null, status: a.status, closedAt: a.status === "closed" ? new Date() : null, version };
  await tx.insert(checks).values({ id: a.id, engineId: a.engineId, ownerId: userId, ...set }).onDuplicateKeyUpdate({ set });
}

export async function applyCheckDelete(tx: Tx, userId: string, version: number, a: { id: string }) {
  const c = await ownedCheck(tx, userId, a.id).catch(() => null);
  if (!c) return;
  await tx.insert(tombstones).values({ entity: "check", entityId: a.id, ownerId: userId, version });
  await tx.delete(checks).where(eq(checks.id, a.id));
}

/** A run of readings of one check, after checking the check is the user's and the readings fit its engine. */
export async function applyReadings(tx: Tx, userId: string, version: number, checkId: string, rs: ReadingInput[], validate: (engine: typeof engines.$inferSelect, rs: ReadingInput[]) => void) {
  const check = await ownedCheck(tx, userId, checkId);
  const [engine] = await tx.select().from(engines).where(eq(engines.id, check.engineId)).limit(1);
  validate(engine!, rs);
  await writeReadings(tx, userId, version, checkId, rs);
}

export async function applyTrayPut(tx: Tx, userId: string, version: number, a: MutationArgs<"tray.put/1">) {
  const [t] = await tx.select({ ownerId: trayItems.ownerId }).from(trayItems).where(eq(trayItems.id, a.id)).limit(1);
  if (t && t.ownerId !== userId) throw new Refused("no such tray item");
  const set = { size: a.size, measuredSize: a.measuredSize, count: a.count, shimDiameter: a.shimDiameter ?? null, version };
  await tx.insert(trayItems).values({ id: a.id, ownerId: userId, ...set }).onDuplicateKeyUpdate({ set });
}

export async function applyTrayDelete(tx: Tx, userId: string, version: number, a: { id: string }) {
  const [t] = await tx.select({ ownerId: trayItems.ownerId }).from(trayItems).where(eq(trayItems.id, a.id)).limit(1);
  if (!t) return;
  if (t.ownerId !== userId) throw new Refused("no such tray item");
  await tx.insert(tombstones).values({ entity: "tray_item", entityId: a.id, ownerId: userId, version });
  await tx.delete(trayItems).where(eq(trayItems.id, a.id));
}

/**
 * A comment from the outbox. The check is looked up inside the push's transaction: the same push
 * may have just created it. Anyone but its owner must be a mentor of a sharing club (isMentor).
 */
export async function applyCommentAdd(tx: Tx, userId: string, version: number, a: MutationArgs<"comment.add/1">, isMentor: (checkId: string) => Promise<boolean>) {
  const [check] = await tx.select({ ownerId: checks.ownerId }).from(checks).where(eq(checks.id, a.checkId)).limit(1);
  if (!check || (check.ownerId !== userId && !(await isMentor(a.checkId)))) throw new Refused("no such check");
  const [c] = await tx.select({ id: comments.id }).from(comments).where(eq(comments.id, a.id)).limit(1);
  if (c) return false; // the same comment sent twice
  await tx.insert(comments).values({ id: a.id, checkId: a.checkId, authorId: userId, body: a.body, valve: a.valve ?? null, version });
  return true;
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
