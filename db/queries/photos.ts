import "server-only";
import { and, asc, eq, inArray, isNotNull, isNull, lt, sql } from "drizzle-orm";
import type { ApiPhoto } from "@/lib/photos/rules";
import { db, type Executor, type Tx } from "../connection";
import { checks, comments, uploads, users } from "../schema";

const apiColumns = {
  id: uploads.id,
  checkId: uploads.checkId,
  valve: uploads.valve,
  commentId: uploads.commentId,
  width: uploads.width,
  height: uploads.height,
  bytes: uploads.bytes,
  uploaderId: uploads.ownerId,
  uploaderName: users.name,
  createdAt: uploads.createdAt,
};

const toApi = (r: { createdAt: Date } & Omit<ApiPhoto, "createdAt">): ApiPhoto => ({
  ...r,
  createdAt: r.createdAt.toISOString(),
});

/** A check's photos whose bytes are in the store (an upload still in flight is not shown yet). */
export async function listPhotos(checkId: string): Promise<ApiPhoto[]> {
  const rows = await db()
    .select(apiColumns)
    .from(uploads)
    .innerJoin(users, eq(users.id, uploads.ownerId))
    .where(and(eq(uploads.checkId, checkId), isNotNull(uploads.storedAt)))
    .orderBy(asc(uploads.createdAt), asc(uploads.id));
  return rows.map(toApi);
}

export async function getPhoto(ex: Executor, id: string): Promise<ApiPhoto | undefined> {
  const [r] = await ex
    .select(apiColumns)
    .from(uploads)
    .innerJoin(users, eq(users.id, uploads.ownerId))
    .where(eq(uploads.id, id))
    .limit(1);
  return r && toApi(r);
}

export async function getPhotoRow(ex: Executor, id: string) {
  const [r] = await ex.select().from(uploads).where(eq(uploads.id, id)).limit(1);
  return r;
}

/** The row of an id, locked for the rest of the transaction (its claim is decided on it). */
export async function lockPhotoRow(ex: Executor, id: string) {
  const [r] = await ex.select().from(uploads).where(eq(uploads.id, id)).limit(1).for("update");
  return r;
}

export async function commentOnCheck(ex: Executor, commentId: string, checkId: string) {
  const [r] = await ex
    .select({ id: comments.id })
    .from(comments)
    .where(and(eq(comments.id, commentId), eq(comments.checkId, checkId)))
    .limit(1);
  return !!r;
}

/**
 * The bytes an account's photos take, claims in flight included. Inside a write it is a locking
 * read: the quota is decided on it, and a plain read would see the transaction's snapshot.
 */
export async function bytesStored(ex: Executor, ownerId: string, lock = false): Promise<number> {
  const q = ex
    .select({ n: sql<string | number | null>`coalesce(sum(${uploads.bytes}), 0)` })
    .from(uploads)
    .where(eq(uploads.ownerId, ownerId));
  const [r] = lock ? await q.for("update") : await q;
  return Number(r?.n ?? 0);
}

/** The row that claims a photo's id, written before its bytes are stored. */
export async function insertClaim(tx: Tx, p: Omit<typeof uploads.$inferInsert, "storedAt">) {
  await tx.insert(uploads).values({ ...p, storedAt: null });
}

/**
 * The bytes are in the store. False when the owner's row is gone (removed while its bytes were
 * being sent).
 */
export async function markStored(tx: Tx, id: string, ownerId: string, version: number): Promise<boolean> {
  const [r] = await tx
    .update(uploads)
    .set({ storedAt: sql`coalesce(${uploads.storedAt}, current_timestamp(3))`, version })
    .where(and(eq(uploads.id, id), eq(uploads.ownerId, ownerId)));
  return r.affectedRows > 0;
}

export async function deletePhoto(tx: Tx, id: string) {
  await tx.delete(uploads).where(eq(uploads.id, id));
}

/** Claims whose bytes never came (the phone that sent them is gone): they give their space back. */
export async function dropStaleClaims(before: Date): Promise<number> {
  const [r] = await db()
    .delete(uploads)
    .where(and(isNull(uploads.storedAt), lt(uploads.createdAt, before)));
  return r.affectedRows;
}

/** Of these object keys, the ones a photo row still names (the sweep keeps those). */
export async function keysInUse(keys: string[]): Promise<Set<string>> {
  if (keys.length === 0) return new Set();
  const rows = await db().select({ k: uploads.objectKey }).from(uploads).where(inArray(uploads.objectKey, keys));
  return new Set(rows.map((r) => r.k));
}

/** Of these check ids, the ones that still exist. */
export async function checksThatExist(ids: string[]): Promise<Set<string>> {
  if (ids.length === 0) return new Set();
  const rows = await db().select({ id: checks.id }).from(checks).where(inArray(checks.id, ids));
  return new Set(rows.map((r) => r.id));
}
