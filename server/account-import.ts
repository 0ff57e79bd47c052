import "server-only";
import { createWriteStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Readable, Transform } from "node:stream";
import { pipeline } from "node:stream/promises";
import yauzl from "yauzl";
import { DomainError } from "@/lib/errors";
import { env } from "@/lib/env";
import { formatBytes } from "@/lib/photos/rules";
import {
  CSV_ENTRY,
  EXPORT_DATA_ENTRY,
  IMPORT_LIMITS,
  PHOTO_ENTRY,
  parseExport,
  type ExportDocument,
} from "@/lib/export/schema";
import { pick } from "@/lib/pick";
import { CHECK_PLAIN_FIELDS, readingValues } from "@/lib/schemas/records";
import { putEngine } from "@/db/queries/garage";
import * as q from "@/db/queries/account-import";
import { bytesStored } from "@/db/queries/photos";
import { db } from "@/db/connection";
import { budget } from "./budgets";
import { spendHourly } from "./spend-hourly";
import { preparePhoto } from "./photo-decode";
import { deleteObject, putObject } from "./storage";
import { write, type WriteCtx } from "./write";
import { writeService } from "@/db/write-path";
import type { SessionUser } from "./auth";

/**
 * Bringing an export back into an account that holds nothing yet. The file is read with every size
 * bounded before a byte of it is inflated (OWASP ASVS 5.0 5.2.3: a zip bomb declares small sizes
 * and inflates large, so each entry's declared size is checked against its kind's limit and yauzl
 * checks the inflated bytes against the declaration), then checked whole (version, schema, ids that
 * must match) before anything is written. The photos are decoded and re-encoded like an upload and
 * stored first; the rows are then written in one transaction through applyImport, and if that fails
 * the stored photos are removed again (the sweep in server/photos.ts takes any it missed). A refused
 * file changes nothing.
 */

/**
 * Imports one account may try in an hour: 5. Each reads a file of up to the photo space plus its
 * data, decodes every photo and writes the whole history (ASVS 2.4.1); one import, and a few tries
 * with a corrected file, is what a person needs.
 */
const importBudget = () => budget({ name: "import:account", points: 5, seconds: 3600 });

/** The zip as uploaded: at most the photo space, the data and the CSVs beside it. */
export const importMaxBytes = () => env().PHOTO_QUOTA_BYTES + IMPORT_LIMITS.dataBytes + 64 * 1024 * 1024;

const damaged = (message: string) =>
  new DomainError("bad_request", `${message}. Nothing was imported.`, { code: "export_damaged" });
const tooBig = (message: string) =>
  new DomainError("too_large", `${message}. Nothing was imported.`, { code: "export_too_large" });

export interface ImportResult {
  engines: number;
  checks: number;
  readings: number;
  comments: number;
  photos: number;
  tray: number;
  /** photos the file lists without their bytes (a phone's export), and comments by other people: kept out */
  photosNotIncluded: number;
  commentsNotRestored: number;
}

export async function importAccount(
  user: SessionUser,
  body: { bytes: number; stream: ReadableStream<Uint8Array> | null },
): Promise<ImportResult> {
  const counts = await q.accountRecordCounts(db(), user.id);
  if (counts.engines || counts.tray) throw notEmpty(counts);
  const limit = importMaxBytes();
  if (body.bytes > limit) throw tooBig(`The file is over ${formatBytes(limit)}, the most an import takes`);
  await spendHourly(
    importBudget(),
    user.id,
    (n, wait) => `You have tried ${n} imports in the last hour, the most an hour allows: try again in ${wait}.`,
  );
  const dir = await mkdtemp(join(tmpdir(), "lashwright-import-"));
  try {
    const file = join(dir, "import.zip");
    await spool(body.stream, file, limit);
    return await importFile(user, file);
  } finally {
    await rm(dir, { recursive: true, force: true }).catch(() => undefined);
  }
}

function notEmpty(c: { engines: number; tray: number }) {
  const has = [
    c.engines ? `${c.engines} engine${c.engines === 1 ? "" : "s"}` : "",
    c.tray ? `${c.tray} tray size${c.tray === 1 ? "" : "s"}` : "",
  ]
    .filter(Boolean)
    .join(" and ");
  return new DomainError(
    "refused",
    `An export is brought back only into an account that holds nothing yet, and this one has ${has}. Nothing was imported.`,
    { code: "account_not_empty" },
  );
}

/** The upload to a file on disk, counted as it arrives: a zip is read by its end, and memory holds a chunk at a time. */
async function spool(stream: ReadableStream<Uint8Array> | null, file: string, limit: number) {
  if (!stream) throw damaged("The file is empty");
  let n = 0;
  const count = new Transform({
    transform(chunk: Buffer, _enc, done) {
      n += chunk.byteLength;
      done(n > limit ? tooBig(`The file is over ${formatBytes(limit)}, the most an import takes`) : null, chunk);
    },
  });
  await pipeline(
    Readable.fromWeb(stream as import("node:stream/web").ReadableStream<Uint8Array>),
    count,
    createWriteStream(file),
  );
}

type Zip = yauzl.ZipFile;

function openZip(file: string): Promise<Zip> {
  return new Promise((resolve, reject) =>
    yauzl.open(
      file,
      { lazyEntries: true, autoClose: false, validateEntrySizes: true, strictFileNames: true },
      (err, zf) => (err || !zf ? reject(damaged("The file is not a zip, or it is damaged")) : resolve(zf)),
    ),
  );
}

/** Every entry's header, bounded in count, checked by kind and size before any is read. */
function listEntries(zf: Zip): Promise<{ data: yauzl.Entry; photos: Map<string, yauzl.Entry> }> {
  return new Promise((resolve, reject) => {
    let data: yauzl.Entry | undefined;
    const photos = new Map<string, yauzl.Entry>();
    const names = new Set<string>();
    let photoBytes = 0;
    // the zip is closed by the caller; reading stops at the first refusal
    const fail = (e: DomainError) => reject(e);
    zf.on("error", () => fail(damaged("The zip is damaged")));
    zf.on("entry", (e: yauzl.Entry) => {
      const name = e.fileName;
      if (names.size >= IMPORT_LIMITS.entries)
        return fail(tooBig(`The zip holds more than ${IMPORT_LIMITS.entries.toLocaleString("en")} files`));
      if (names.has(name)) return fail(damaged(`The zip holds ${name} twice`));
      names.add(name);
      if (e.isEncrypted()) return fail(damaged(`${name} in the zip is encrypted`));
      if (name.endsWith("/")) return zf.readEntry();
      const photo = PHOTO_ENTRY.exec(name);
      let max: number;
      if (name === EXPORT_DATA_ENTRY) {
        data = e;
        max = IMPORT_LIMITS.dataBytes;
      } else if (photo) {
        photos.set(photo[1]!, e);
        max = IMPORT_LIMITS.photoBytes;
        photoBytes += e.uncompressedSize;
      } else if (CSV_ENTRY.test(name)) {
        max = IMPORT_LIMITS.csvBytes;
      } else {
        return fail(damaged(`The zip holds ${name.slice(0, 80)}, which an export never has`));
      }
      if (e.uncompressedSize > max)
        return fail(
          tooBig(
            `${name.slice(0, 80)} in the zip is ${formatBytes(e.uncompressedSize)} unpacked; the most it may be is ${formatBytes(max)}`,
          ),
        );
      if (photoBytes > env().PHOTO_QUOTA_BYTES)
        return fail(
          tooBig(`The photos in the zip are more than your photo space (${formatBytes(env().PHOTO_QUOTA_BYTES)})`),
        );
      zf.readEntry();
    });
    zf.on("end", () =>
      data ? resolve({ data, photos }) : fail(damaged(`The zip has no ${EXPORT_DATA_ENTRY}: it is not an export`)),
    );
    zf.readEntry();
  });
}

/** One entry's bytes, stopped as soon as they pass the limit (yauzl also refuses bytes beyond the declared size). */
function readEntry(zf: Zip, e: yauzl.Entry, limit: number): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    zf.openReadStream(e, (err, s) => {
      if (err || !s) return reject(damaged(`${e.fileName} in the zip cannot be read`));
      const chunks: Buffer[] = [];
      let n = 0;
      s.on("data", (c: Buffer) => {
        n += c.byteLength;
        if (n > limit) {
          s.destroy();
          reject(tooBig(`${e.fileName} in the zip is larger than it may be`));
        } else chunks.push(c);
      });
      s.on("error", () => reject(damaged(`${e.fileName} in the zip is damaged`)));
      s.on("end", () => resolve(Buffer.concat(chunks)));
    });
  });
}

interface Prepared {
  doc: ExportDocument;
  ids: Map<string, string>;
  photos: {
    id: string;
    key: string;
    checkId: string;
    valve: string | null;
    commentId: string | null;
    bytes: number;
    width: number;
    height: number;
    createdAt: Date | null;
  }[];
  photosNotIncluded: number;
}

async function importFile(user: SessionUser, file: string): Promise<ImportResult> {
  const zf = await openZip(file);
  const stored: string[] = [];
  try {
    const { data, photos } = await listEntries(zf);
    let json: unknown;
    try {
      json = JSON.parse((await readEntry(zf, data, IMPORT_LIMITS.dataBytes)).toString("utf8"));
    } catch (e) {
      if (e instanceof DomainError) throw e;
      throw damaged(`${EXPORT_DATA_ENTRY} in the zip is not valid JSON`);
    }
    const parsed = parseExport(json);
    if (!parsed.ok)
      throw parsed.refusal.kind === "newer"
        ? new DomainError("refused", parsed.refusal.message, { code: "export_newer" })
        : damaged(parsed.refusal.message);
    const doc = parsed.doc;
    // every id is new: the same history may still be in another account (that is what an export is for)
    const ids = new Map<string, string>();
    const fresh = (old: string) => {
      let id = ids.get(old);
      if (!id) ids.set(old, (id = crypto.randomUUID()));
      return id;
    };
    for (const list of [doc.engines, doc.checks, doc.tray, doc.comments.filter((c) => c.byMe), doc.photos])
      for (const r of list) fresh(r.id);

    const prepared: Prepared = { doc, ids, photos: [], photosNotIncluded: 0 };
    const quota = env().PHOTO_QUOTA_BYTES;
    let used = await bytesStored(db(), user.id);
    for (const p of doc.photos) {
      const entry = p.file ? photos.get(p.id) : undefined;
      if (!p.file) {
        prepared.photosNotIncluded++;
        continue;
      }
      if (!entry) throw damaged(`The data names ${p.file}, which is not in the zip`);
      // decoded and re-encoded like any upload: a file made by hand is no way around the photo rules
      const img = await preparePhoto(await readEntry(zf, entry, IMPORT_LIMITS.photoBytes)).catch((e: unknown) => {
        throw e instanceof DomainError && e.kind !== "overloaded" ? damaged(`${p.file} in the zip: ${e.message}`) : e;
      });
      used += img.data.byteLength;
      if (used > quota) throw tooBig(`The photos take more than your photo space (${formatBytes(quota)})`);
      const checkId = ids.get(p.checkId)!;
      const id = ids.get(p.id)!;
      const key = `checks/${checkId}/${id}.jpg`;
      await putObject(key, img.data, img.contentType);
      stored.push(key);
      prepared.photos.push({
        id,
        key,
        checkId,
        valve: p.valve,
        commentId: p.commentId ? (ids.get(p.commentId) ?? null) : null,
        bytes: img.data.byteLength,
        width: img.width,
        height: img.height,
        createdAt: p.createdAt ? new Date(p.createdAt) : null,
      });
    }
    const result = await write(user, (w) => applyImport(w, prepared));
    stored.length = 0; // the rows hold them now
    return result;
  } finally {
    zf.close();
    // written before a refusal or a failed transaction: nothing of the file stays
    for (const key of stored) await deleteObject(key).catch(() => undefined);
  }
}

/**
 * The one write of an import, in the caller's transaction: the account is still empty (a locking
 * read: two imports at once cannot both pass), then every row, stamped with this write's version so
 * the phones pull them.
 */
export const applyImport = writeService("account import", async (w: WriteCtx, p: Prepared): Promise<ImportResult> => {
  const counts = await q.accountRecordCounts(w.tx, w.user.id, true);
  if (counts.engines || counts.tray) throw notEmpty(counts);
  const { doc, ids } = p;
  const id = (old: string) => ids.get(old)!;
  const owner = w.user.id;
  const version = w.version;
  for (const e of doc.engines) await putEngine(w.tx, owner, version, id(e.id), e);
  await q.insertChecks(
    w.tx,
    doc.checks.map((c) => ({
      // the file's ids are replaced by new ones (ids)
      ...pick(c, CHECK_PLAIN_FIELDS),
      id: id(c.id),
      engineId: id(c.engineId),
      ownerId: owner,
      startedAt: new Date(c.startedAt),
      closedAt: c.closedAt ? new Date(c.closedAt) : null,
      version,
    })),
  );
  await q.insertReadings(
    w.tx,
    doc.readings.map((r) => ({
      id: crypto.randomUUID(),
      checkId: id(r.checkId),
      ownerId: owner,
      valve: r.valve,
      round: r.round,
      ...readingValues(r),
      fittedAt: r.fittedAt ? new Date(r.fittedAt) : null,
      version,
    })),
  );
  const own = doc.comments.filter((c) => c.byMe);
  await q.insertComments(
    w.tx,
    own.map((c) => ({
      id: id(c.id),
      checkId: id(c.checkId),
      authorId: owner,
      clubId: null,
      valve: c.valve,
      body: c.body,
      createdAt: new Date(c.createdAt),
      version,
    })),
  );
  const now = new Date();
  await q.insertUploads(
    w.tx,
    p.photos.map((ph) => ({
      id: ph.id,
      ownerId: owner,
      checkId: ph.checkId,
      commentId: ph.commentId,
      valve: ph.valve,
      objectKey: ph.key,
      contentType: "image/jpeg",
      bytes: ph.bytes,
      width: ph.width,
      height: ph.height,
      storedAt: now,
      ...(ph.createdAt ? { createdAt: ph.createdAt } : {}),
      version,
    })),
  );
  await q.insertTray(
    w.tx,
    doc.tray.map((t) => ({
      id: id(t.id),
      ownerId: owner,
      size: t.size,
      measuredSize: t.measuredSize,
      count: t.count,
      shimDiameter: t.shimDiameter,
      version,
    })),
  );
  return {
    engines: doc.engines.length,
    checks: doc.checks.length,
    readings: doc.readings.length,
    comments: own.length,
    photos: p.photos.length,
    tray: doc.tray.length,
    photosNotIncluded: p.photosNotIncluded,
    commentsNotRestored: doc.comments.length - own.length,
  };
});
