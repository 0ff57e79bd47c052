import "server-only";
import {
  PHOTO_MAX_BYTES,
  PHOTO_QUOTA_CODE,
  formatBytes,
  photoFields,
  usageLabel,
  type ApiPhoto,
  type PhotoFields,
  type PhotoUsage,
} from "@/lib/photos/rules";
import * as q from "@/db/queries/photos";
import { conflict, DomainError, forbidden, invalid, notFound, overloaded } from "@/lib/errors";
import { env } from "@/lib/env";
import { db, type Executor } from "@/db/connection";
import { mysqlErrorCode } from "@/db/errors";
import { onWritePath } from "@/db/write-path";
import { readableCheck } from "./access";
import { budget } from "./budgets";
import { spendHourly } from "./spend-hourly";
import { BodyTooLarge } from "./request-guard";
import { preparePhoto, tooLarge } from "./photo-decode";
import { deleteObject, getObject, listObjects, putObject } from "./storage";
import { write, type WriteCtx } from "./write";
import type { SessionUser } from "./auth";
import { log } from "./log";

/**
 * Photos on readings and comments. Decoding is bounded in server/photo-decode.ts; keys are made here
 * from ids, so nothing the caller sends becomes a path. An upload writes its row first, claiming the
 * id, and stores the bytes after: a retry sent while the first try is still in flight, or after it
 * was cut off, finds the row and completes it, and nothing in the upload path ever deletes a stored
 * object (a loser that did once took the winner's photo with it).
 */
export { tooLarge };

/**
 * Photos one account may send in an hour (PHOTO_UPLOADS_PER_HOUR, 120 by default; OWASP ASVS 5.0
 * 2.4.1, anti-automation against overuse of costly resources): each is a decode
 * and a store, and 120 covers two photos of every valve of a 24-valve engine twice over. A retry of
 * a photo already stored is answered before this is spent, and a send the server turned away
 * (busy) or that turned out to be a duplicate gives its unit back, so the owner's retries never eat it.
 */
const uploadBudget = () =>
  budget({ name: "photo-upload:account", points: env().PHOTO_UPLOADS_PER_HOUR, seconds: 3600 });

const objectKey = (checkId: string, id: string) => `checks/${checkId}/${id}.jpg`;

export async function photoUsage(user: SessionUser): Promise<PhotoUsage> {
  return { usedBytes: await q.bytesStored(db(), user.id), quotaBytes: env().PHOTO_QUOTA_BYTES };
}

/**
 * The account's photo space is spent (a quota per user, OWASP ASVS 5.0 5.2.4): the message names the
 * quota, and the phone keeps the photo.
 */
function quotaFull(usage: PhotoUsage, needs?: number) {
  const full = usage.usedBytes >= usage.quotaBytes;
  return new DomainError(
    "refused",
    `${full ? "Your photo space is full" : "This photo does not fit in your photo space"}: ${usageLabel(usage)}${needs ? `, and this photo takes ${formatBytes(needs)}` : ""}. Remove photos you no longer need to make room; this one waits on your phone until then.`,
    { code: PHOTO_QUOTA_CODE },
  );
}

type Prepared = Awaited<ReturnType<typeof preparePhoto>>;

/**
 * Claim the photo's id in the write path: the check's access, the id, the comment and the quota are
 * decided in the one transaction that writes the row. "stored": the same photo is already there;
 * "unstored": its row is there but not its bytes (a try in flight or cut off), so this one stores them.
 * This and the other writes of photo rows here are a named write service (db/write-path.ts).
 */
async function claimPhoto(
  w: WriteCtx,
  checkId: string,
  f: PhotoFields,
  img: Prepared,
): Promise<"new" | "unstored" | "stored"> {
  await readableCheck(w.tx, w.user, checkId);
  const existing = await q.lockPhotoRow(w.tx, f.id);
  if (existing) {
    if (existing.checkId !== checkId || existing.ownerId !== w.user.id) throw conflict("That photo id is taken");
    // the same picture re-encoded gives the same bytes; another picture under this id is not a retry
    if (!existing.storedAt && existing.bytes !== img.data.byteLength)
      throw conflict("That photo id is taken by another picture");
    return existing.storedAt ? "stored" : "unstored";
  }
  if (f.commentId && !(await q.commentOnCheck(w.tx, f.commentId, checkId)))
    throw invalid("commentId: no such comment on this check", { commentId: "no such comment on this check" });
  const usage = { usedBytes: await q.bytesStored(w.tx, w.user.id, true), quotaBytes: env().PHOTO_QUOTA_BYTES };
  if (usage.usedBytes + img.data.byteLength > usage.quotaBytes) throw quotaFull(usage, img.data.byteLength);
  const p = {
    id: f.id,
    ownerId: w.user.id,
    checkId,
    valve: f.valve ?? null,
    commentId: f.commentId ?? null,
    objectKey: objectKey(checkId, f.id),
    contentType: img.contentType,
    bytes: img.data.byteLength,
    width: img.width,
    height: img.height,
    version: w.version,
  };
  try {
    await q.insertClaim(w.tx, p);
  } catch (e) {
    // another account claimed the same id at the same moment (our locking read found no row yet)
    if (mysqlErrorCode(e) === "ER_DUP_ENTRY") throw conflict("That photo id is taken");
    throw e;
  }
  return "new";
}

/** The claim's bytes are stored: the caller still reads the check, decided in the write that marks it. */
async function markStored(w: WriteCtx, checkId: string, id: string): Promise<boolean> {
  await readableCheck(w.tx, w.user, checkId);
  return q.markStored(w.tx, id, w.user.id, w.version);
}

/**
 * An upload: a check the caller cannot read answers 404 whatever was sent, and an oversized body is
 * refused from its declared length (a little room for the form's other fields) before it is read,
 * or as soon as its bytes pass that limit while it is read.
 */
export async function uploadPhoto(
  user: SessionUser,
  checkId: string,
  body: { bytes: number; read: (limit: number) => Promise<FormData> },
): Promise<{ photo: ApiPhoto; created: boolean; usage: PhotoUsage }> {
  // answered before the body is read; the writes below decide it again in their own transactions
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
  const fields = photoFields.safeParse({
    id: form.get("id"),
    valve: form.get("valve") || null,
    commentId: form.get("commentId") || null,
  });
  if (!fields.success) {
    const i = fields.error.issues[0]!;
    throw invalid(`${i.path.join(".")}: ${i.message}`, { [i.path.join(".")]: i.message });
  }
  const f = fields.data;
  const done = async (created: boolean) => ({
    photo: (await q.getPhoto(db(), f.id))!,
    created,
    usage: await photoUsage(user),
  });

  // The same photo sent again (a lost answer, a retried sync) is answered before anything costly.
  const existing = await q.getPhotoRow(db(), f.id);
  if (existing && (existing.checkId !== checkId || existing.ownerId !== user.id))
    throw conflict("That photo id is taken");
  if (existing?.storedAt) return done(false);
  if (!existing) {
    // a full account is told so before its photo is decoded or its budget spent
    const usage = await photoUsage(user);
    if (usage.usedBytes >= usage.quotaBytes) throw quotaFull(usage);
  }

  await spendHourly(
    uploadBudget(),
    user.id,
    (n, wait) =>
      `You have sent ${n} photos in the last hour, the most an hour allows: the rest wait on your phone and are sent in ${wait}.`,
  );
  const giveBack = () =>
    uploadBudget()
      .refund(user.id)
      .catch(() => undefined);
  let img: Prepared;
  try {
    img = await preparePhoto(Buffer.from(await file.arrayBuffer()));
  } catch (e) {
    // turned away before any work: the phone sends it again, and that try pays
    if (e instanceof DomainError && e.kind === "overloaded") await giveBack();
    throw e;
  }

  const claim = await write(user, (w) => onWritePath("photos", () => claimPhoto(w, checkId, f, img)));
  if (claim === "stored") {
    await giveBack();
    return done(false);
  }
  // Row first, bytes second: a failure from here on leaves a claim that the phone's retry completes.
  // Two tries of one photo write the same bytes under the same key, which harms neither.
  try {
    await putObject(objectKey(checkId, f.id), img.data, img.contentType);
  } catch (e) {
    log.error({ err: e }, "photos: storing failed");
    throw overloaded("The photo store did not take the photo: it is sent again in a moment");
  }
  const marked = await write(user, (w) => onWritePath("photos", () => markStored(w, checkId, f.id)));
  // removed while its bytes were on their way: a new try claims it afresh
  if (!marked) throw overloaded("The photo changed while it was stored: it is sent again in a moment");
  return done(claim === "new");
}

/** A photo may be read by whoever may read its check; the answer says as whom. */
async function readablePhoto(ex: Executor, user: SessionUser, photoId: string) {
  const p = await q.getPhotoRow(ex, photoId);
  // a row whose bytes are not stored yet is an upload in flight: nothing to show
  if (!p?.storedAt) throw notFound("photo");
  const access = await readableCheck(ex, user, p.checkId).catch((e: unknown) => {
    throw e instanceof DomainError ? notFound("photo") : e;
  });
  return { p, as: access.as };
}

export async function photoBytes(user: SessionUser, photoId: string) {
  const { p } = await readablePhoto(db(), user, photoId);
  return { row: p, bytes: await getObject(p.objectKey) };
}

/** The uploader or the check's owner may remove a photo: decided and done in one write, the bytes after it. */
export async function removePhoto(user: SessionUser, photoId: string) {
  const key = await write(user, (w) =>
    onWritePath("photos", async () => {
      const { p, as } = await readablePhoto(w.tx, w.user, photoId);
      if (p.ownerId !== w.user.id && as !== "owner")
        throw forbidden("Only who took the photo or the check's owner can remove it");
      await q.deletePhoto(w.tx, photoId);
      return p.objectKey;
    }),
  );
  await deleteObject(key).catch(() => undefined);
}

const STALE_CLAIM_MS = 24 * 3600_000;

/**
 * Photos whose row is gone (a check or engine deleted, with every photo on it; a claim never
 * completed) are removed from the store: a deleted check's photos must not outlive it (OWASP ASVS
 * 5.0 V14 Data Protection). An object younger than `graceMs` is left alone, as a try of its upload
 * may still be storing it. Run after deletions and on a timer.
 */
export async function sweepPhotos(graceMs = 10 * 60_000): Promise<number> {
  // a claim whose bytes never came in a day (the phone that sent it lost it) gives its space back
  await onWritePath("photos", () => q.dropStaleClaims(new Date(Date.now() - STALE_CLAIM_MS)));
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
      log.error({ err: e }, "photos: the sweep failed");
      return 0;
    })
    .finally(() => {
      sweeping = null;
    });
  return sweeping;
}
