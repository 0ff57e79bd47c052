import "server-only";
import sharp from "sharp";
import { PHOTO_FORMATS, PHOTO_MAX_BYTES, PHOTO_MAX_EDGE, PHOTO_MAX_LABEL, photoFields, type ApiPhoto } from "@/lib/photos/rules";
import * as q from "@/db/queries/photos";
import { conflict, DomainError, forbidden, invalid, notFound } from "@/lib/errors";
import { db } from "@/db/client";
import { readableCheck } from "./access";
import { BodyTooLarge } from "./request-guard";
import { deleteObject, getObject, listObjects, putObject } from "./storage";
import type { SessionUser } from "./auth";

/**
 * Photos on readings and comments. The type is judged from the bytes (sharp decodes them), never
 * from the name or the declared type; the stored copy is re-encoded, turned upright, scaled to
 * PHOTO_MAX_EDGE and carries no metadata at all (sharp drops EXIF, GPS included, unless asked to
 * keep it). Keys are made here from ids, so nothing the caller sends becomes a path.
 */
export const tooLarge = () => new DomainError("too_large", `A photo may be at most ${PHOTO_MAX_LABEL}`);

export async function preparePhoto(input: Buffer) {
  if (input.byteLength > PHOTO_MAX_BYTES) throw tooLarge();
  let format: string | undefined;
  try {
    // limitInputPixels: a tiny file that unpacks to a huge picture is refused before decoding
    format = (await sharp(input, { limitInputPixels: 50_000_000 }).metadata()).format;
  } catch {
    format = undefined;
  }
  if (!format || !(PHOTO_FORMATS as readonly string[]).includes(format)) throw new DomainError("unsupported", "That file is not a JPEG, PNG or WebP picture", { code: "not_a_photo" });
  try {
    const { data, info } = await sharp(input, { limitInputPixels: 50_000_000 })
      .rotate()
      .resize({ width: PHOTO_MAX_EDGE, height: PHOTO_MAX_EDGE, fit: "inside", withoutEnlargement: true })
      .jpeg({ quality: 82, mozjpeg: true })
      .toBuffer({ resolveWithObject: true });
    return { data, width: info.width, height: info.height, contentType: "image/jpeg" };
  } catch {
    throw new DomainError("unsupported", "That picture could not be read", { code: "not_a_photo" });
  }
}

/**
 * An upload: a check the caller cannot read answers 404 whatever was sent, and an oversized body is
 * refused from its declared length (a little room for the form's other fields) before it is read,
 * or as soon as its bytes pass that limit while it is read.
 */
export async function uploadPhoto(user: SessionUser, checkId: string, body: { bytes: number; read: (limit: number) => Promise<FormData> }): Promise<{ photo: ApiPhoto; created: boolean }> {
  await readableCheck(db(), user, checkId);
  const limit = PHOTO_MAX_BYTES + 64 * 1024;
  if (body.bytes > limit) throw tooLarge();
  let form: FormData;
  try {
    // counted while read, so a chunked body with no declared length stops at the limit too
    form = await body.read(limit);
  } catch (e) {
    if (e instanceof BodyTooLarge) throw tooLarge();
    if (e instanceof DomainError) throw e;
    throw new DomainError("bad_request", "Send the photo as a multipart form", { code: "bad_form" });
  }
  const file = form.get("file");
  if (!(file instanceof Blob)) throw invalid("file: attach a photo", { file: "attach a photo" });
  if (file.size > PHOTO_MAX_BYTES) throw tooLarge();
  const fields = photoFields.safeParse({ id: form.get("id"), valve: form.get("valve") || null, commentId: form.get("commentId") || null });
  if (!fields.success) {
    const i = fields.error.issues[0]!;
    throw invalid(`${i.path.join(".")}: ${i.message}`, { [i.path.join(".")]: i.message });
  }
  const f = fields.data;
  // the same photo sent again (a lost answer, a retried sync) is the one already stored
  const existing = await q.getPhoto(f.id);
  if (existing) {
    if (existing.checkId !== checkId || existing.uploaderId !== user.id) throw conflict("That photo id is taken");
    return { photo: existing, created: false };
  }
  if (f.commentId && !(await q.commentOnCheck(f.commentId, checkId))) throw invalid("commentId: no such comment on this check", { commentId: "no such comment on this check" });
  const img = await preparePhoto(Buffer.from(await file.arrayBuffer()));
  const key = `checks/${checkId}/${f.id}.jpg`;
  await putObject(key, img.data, img.contentType);
  try {
    await q.insertPhoto({ id: f.id, ownerId: user.id, checkId, valve: f.valve ?? null, commentId: f.commentId ?? null, objectKey: key, contentType: img.contentType, bytes: img.data.byteLength, width: img.width, height: img.height });
  } catch (e) {
    await deleteObject(key).catch(() => undefined);
    throw e;
  }
  return { photo: (await q.getPhoto(f.id))!, created: true };
}

/** A photo may be read by whoever may read its check; the answer says as whom. */
async function readablePhoto(user: SessionUser, photoId: string) {
  const p = await q.getPhotoRow(photoId);
  if (!p) throw notFound("photo");
  const access = await readableCheck(db(), user, p.checkId).catch(() => {
    throw notFound("photo");
  });
  return { p, as: access.as };
}

export async function photoBytes(user: SessionUser, photoId: string) {
  const { p } = await readablePhoto(user, photoId);
  return { row: p, bytes: await getObject(p.objectKey) };
}

/** The uploader or the check's owner may remove a photo. */
export async function removePhoto(user: SessionUser, photoId: string) {
  const { p, as } = await readablePhoto(user, photoId);
  if (p.ownerId !== user.id && as !== "owner") throw forbidden("Only who took the photo or the check's owner can remove it");
  await q.deletePhoto(photoId);
  await deleteObject(p.objectKey).catch(() => undefined);
}

/**
 * Photos whose row is gone (a check or engine deleted, with every photo on it; an upload that died
 * between storing the bytes and writing the row) are removed from the store: a deleted check's
 * photos must not outlive it (OWASP ASVS 5.0 V14 Data Protection). An object younger than `graceMs`
 * is left alone, as its upload may still be writing the row. Run after deletions and on a timer.
 */
export async function sweepPhotos(graceMs = 10 * 60_000): Promise<number> {
  let removed = 0;
  const before = Date.now() - graceMs;
  const checkOf = (key: string) => key.split("/")[1] ?? "";
  for await (const page of listObjects("checks/")) {
    const used = await q.keysInUse(page.map((o) => o.key));
    // a deleted check takes no new photo (its upload fails on the missing row), so no grace there
    const alive = await q.checksThatExist([...new Set(page.map((o) => checkOf(o.key)))]);
    for (const o of page) {
      if (used.has(o.key) || (alive.has(checkOf(o.key)) && o.modified.getTime() > before)) continue;
      await deleteObject(o.key);
      removed++;
    }
  }
  return removed;
}

let sweeping: Promise<number> | null = null;
/** Start a sweep unless one runs; never fails the caller (the timer tries again). */
export function kickPhotoSweep(graceMs?: number): Promise<number> {
  sweeping ??= sweepPhotos(graceMs)
    .catch((e: unknown) => {
      console.error("[photos] sweep failed:", e instanceof Error ? e.message : e);
      return 0;
    })
    .finally(() => {
      sweeping = null;
    });
  return sweeping;
}
