import { Zip, ZipDeflate, ZipPassThrough } from "fflate";
import type { ApiPhoto } from "../photos/rules";
import type { LocalCheck, LocalDb, LocalEngine, LocalReading } from "../sync/local-db";
import {
  DOCUMENT_ARRAYS,
  EXPORT_DATA_ENTRY,
  checkFiles,
  exportFileName,
  exportHead,
  readingForFile,
  photoEntryName,
  previousOf,
  type ExportCheck,
  type ExportDocument,
  type ExportEngine,
  type ExportPhoto,
  type ExportReading,
  type ExportTrayItem,
} from "./schema";
import type { LengthUnit } from "../lash";
import { pick } from "../pick";
import { CHECK_PLAIN_FIELDS, ENGINE_LAYOUT_FIELDS } from "../schemas/records";

/**
 * The same export file made on the phone from its local copy, with no server: for a garage with no
 * signal, or a server that is gone. The phone holds no loans and only the bytes of photos taken on
 * it; photos it knows of from the server but does not hold are listed with `file: null` (not
 * included). The zip is built in pieces that become Blobs as they fill, so the page holds one piece
 * of it at a time and the browser may keep the rest on disk.
 */
const toIso = (d: string | Date | null) => (d == null ? null : new Date(d).toISOString());

export function engineOfPhone(e: LocalEngine): ExportEngine {
  return {
    ...pick(e, ENGINE_LAYOUT_FIELDS),
    firingAngles: e.firingAngles ?? null,
    timing: e.timing,
    intake: e.intake,
    exhaust: e.exhaust,
    measuredHot: e.measuredHot,
    shims: e.shims,
    shimDiameter: e.shimDiameter ?? null,
    assembledShim: e.assembledShim ?? null,
    displayUnit: e.displayUnit,
    odometerUnit: e.odometerUnit,
    mirrored: e.mirrored,
    shimPosition: e.shimPosition ?? null,
  };
}

const checkOfPhone = (c: LocalCheck): ExportCheck => ({
  ...pick(c, CHECK_PLAIN_FIELDS),
  notes: c.notes ?? null,
  startedAt: toIso(c.startedAt)!,
  closedAt: toIso(c.closedAt),
});

// the phone does not keep when a shim went in; the server does
const readingOfPhone = (r: LocalReading): ExportReading => readingForFile(r, null);

export interface PhoneExportInput {
  db: LocalDb;
  user: { id: string; name: string; email: string; displayUnit: LengthUnit };
  /** photos the phone has heard of from the server (its kept answers), listed as not included when it has no bytes */
  knownPhotos?: ApiPhoto[];
  now?: Date;
}

/** Pieces of the zip as they come, turned into Blobs every few MB. */
class Pieces {
  private chunks: Uint8Array<ArrayBuffer>[] = [];
  private size = 0;
  readonly blobs: Blob[] = [];
  add(c: Uint8Array) {
    this.chunks.push(new Uint8Array(c));
    this.size += c.byteLength;
    if (this.size > 4 * 1024 * 1024) this.flush();
  }
  flush() {
    if (this.chunks.length) this.blobs.push(new Blob(this.chunks));
    this.chunks = [];
    this.size = 0;
  }
}

export async function phoneExport({
  db,
  user,
  knownPhotos = [],
  now = new Date(),
}: PhoneExportInput): Promise<{ blob: Blob; fileName: string; photosNotIncluded: number }> {
  const pieces = new Pieces();
  let failed: Error | null = null;
  let done!: () => void;
  const ended = new Promise<void>((resolve) => (done = resolve));
  const zip = new Zip((err, chunk, final) => {
    if (err) failed = err;
    else pieces.add(chunk);
    if (final || err) done();
  });
  const mtime = now;
  const text = (name: string) => {
    const f = new ZipDeflate(name, { level: 6 });
    f.mtime = mtime;
    zip.add(f);
    const enc = new TextEncoder();
    return { push: (s: string, last = false) => f.push(enc.encode(s), last) };
  };

  const engines = (await db.engines.toArray()).map(engineOfPhone).sort((a, b) => a.id.localeCompare(b.id));
  const engineIds = new Set(engines.map((e) => e.id));
  const checks = (await db.checks.toArray()).map(checkOfPhone).filter((c) => engineIds.has(c.engineId));
  checks.sort(
    (a, b) =>
      a.engineId.localeCompare(b.engineId) || a.startedAt.localeCompare(b.startedAt) || a.id.localeCompare(b.id),
  );
  const checkIds = new Set(checks.map((c) => c.id));
  const tray: ExportTrayItem[] = (await db.tray.toArray()).map((t) => ({
    id: t.id,
    size: t.size,
    measuredSize: t.measuredSize,
    count: t.count,
    shimDiameter: t.shimDiameter ?? null,
  }));
  const readingsOf = async (checkId: string) =>
    (await db.readings.where("checkId").equals(checkId).toArray())
      .map(readingOfPhone)
      .sort((a, b) => a.valve.localeCompare(b.valve) || a.round - b.round);
  const comments = (await db.comments.toArray()).filter((c) => checkIds.has(c.checkId));
  const local = await db.photos.toArray();
  const localIds = new Set(local.map((p) => p.id));
  const photos: (ExportPhoto & { blob?: Blob })[] = [];
  for (const p of local) {
    if (!checkIds.has(p.checkId)) continue;
    photos.push({
      id: p.id,
      checkId: p.checkId,
      valve: p.valve,
      commentId: p.commentId,
      contentType: p.blob.type || "image/jpeg",
      bytes: p.blob.size,
      width: null,
      height: null,
      createdAt: new Date(p.takenAt).toISOString(),
      byMe: true,
      file: photoEntryName(p.id),
      blob: p.blob,
    });
  }
  const seen = new Set<string>();
  for (const p of knownPhotos) {
    if (localIds.has(p.id) || seen.has(p.id) || !checkIds.has(p.checkId)) continue;
    seen.add(p.id);
    photos.push({
      id: p.id,
      checkId: p.checkId,
      valve: p.valve,
      commentId: p.commentId,
      contentType: "image/jpeg",
      bytes: p.bytes,
      width: p.width,
      height: p.height,
      createdAt: p.createdAt,
      byMe: p.uploaderId === user.id,
      file: null,
    });
  }
  const commentIds = new Set(comments.map((c) => c.id));
  // a photo on a comment the phone does not hold keeps its place on the check
  for (const p of photos) if (p.commentId && !commentIds.has(p.commentId)) p.commentId = null;

  const perCheck: { check: ExportCheck; readings: ExportReading[]; csvName: string; csv: string }[] = [];
  const plans: NonNullable<ReturnType<typeof checkFiles>["plan"]>[] = [];
  const allReadings: ExportReading[] = [];
  for (const e of engines) {
    const list = checks.filter((c) => c.engineId === e.id);
    const byId = new Map<string, ExportReading[]>();
    for (const c of list) byId.set(c.id, await readingsOf(c.id));
    for (const c of list) {
      const prev = previousOf(c, list);
      const f = checkFiles(e, c, byId.get(c.id)!, tray, prev ? { check: prev, readings: byId.get(prev.id)! } : null);
      if (f.plan) plans.push(f.plan);
      allReadings.push(...byId.get(c.id)!);
      perCheck.push({ check: c, readings: byId.get(c.id)!, csvName: f.csvName, csv: f.csv });
    }
  }

  const doc: Omit<ExportDocument, "photos"> & { photos: ExportPhoto[] } = {
    ...exportHead(now, "phone", user),
    engines,
    checks,
    readings: allReadings,
    plans,
    comments: comments.map((c) => ({
      id: c.id,
      checkId: c.checkId,
      valve: c.valve ?? null,
      body: c.body,
      createdAt: toIso(c.createdAt)!,
      byMe: c.authorId === user.id,
      authorName: c.authorId === user.id ? user.name : "another member",
    })),
    commentsElsewhere: [],
    photos: photos.map((p) => {
      const out: ExportPhoto & { blob?: Blob } = { ...p };
      delete out.blob;
      return out;
    }),
    tray,
    loans: [],
  };
  // written array by array, as the server writes it
  const data = text(EXPORT_DATA_ENTRY);
  const head = {
    format: doc.format,
    schemaVersion: doc.schemaVersion,
    exportedAt: doc.exportedAt,
    source: doc.source,
    account: doc.account,
  };
  data.push(JSON.stringify(head).slice(0, -1));
  for (const key of DOCUMENT_ARRAYS) {
    data.push(`,\n${JSON.stringify(key)}:[`);
    (doc[key] as unknown[]).forEach((item, i) => data.push(`${i ? "," : ""}\n${JSON.stringify(item)}`));
    data.push("]");
  }
  data.push("\n}\n", true);
  for (const c of perCheck) text(c.csvName).push(c.csv, true);
  for (const p of photos) {
    if (!p.blob) continue;
    const f = new ZipPassThrough(p.file!);
    f.mtime = mtime;
    zip.add(f);
    f.push(new Uint8Array(await p.blob.arrayBuffer()), true);
  }
  zip.end();
  await ended;
  if (failed) throw failed;
  pieces.flush();
  return {
    blob: new Blob(pieces.blobs, { type: "application/zip" }),
    fileName: exportFileName(now, "phone"),
    photosNotIncluded: photos.filter((p) => !p.file).length,
  };
}
