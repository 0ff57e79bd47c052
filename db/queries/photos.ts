import "server-only";
import { and, asc, eq, inArray } from "drizzle-orm";
import type { ApiPhoto } from "@/lib/photos/rules";
import { db } from "../client";
import { checks, comments, uploads, users } from "../schema";
import { versioned } from "../versions";

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

const toApi = (r: { createdAt: Date } & Omit<ApiPhoto, "createdAt">): ApiPhoto => ({ ...r, createdAt: r.createdAt.toISOString() });

export async function listPhotos(checkId: string): Promise<ApiPhoto[]> {
  const rows = await db().select(apiColumns).from(uploads).innerJoin(users, eq(users.id, uploads.ownerId)).where(eq(uploads.checkId, checkId)).orderBy(asc(uploads.createdAt), asc(uploads.id));
  return rows.map(toApi);
}

export async function getPhoto(id: string): Promise<ApiPhoto | undefined> {
  const [r] = await db().select(apiColumns).from(uploads).innerJoin(users, eq(users.id, uploads.ownerId)).where(eq(uploads.id, id)).limit(1);
  return r && toApi(r);
}

export async function getPhotoRow(id: string) {
  const [r] = await db().select().from(uploads).where(eq(uploads.id, id)).limit(1);
  return r;
}

export async function commentOnCheck(commentId: string, checkId: string) {
  const [r] = await db().select({ id: comments.id }).from(comments).where(and(eq(comments.id, commentId), eq(comments.checkId, checkId))).limit(1);
  return !!r;
}

export async function insertPhoto(p: typeof uploads.$inferInsert) {
  await versioned(p.ownerId, (tx, version) => tx.insert(uploads).values({ ...p, version }));
}

export async function deletePhoto(id: string) {
  await db().delete(uploads).where(eq(uploads.id, id));
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
