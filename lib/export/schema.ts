import "../schemas/zod-config";
import { z } from "zod";
import { LENGTH_UNITS, lengthMm, positiveLengthMm, timingSchema } from "../lash";
import {
  READING_VALUE_FIELDS,
  checkStatus,
  engineFields,
  engineRules,
  idSchema,
  readingInput,
  readingProblems,
  readingValues,
  type ReadingValueField,
} from "../schemas/records";
import { pick } from "../pick";
import { BORROW_STATES } from "../pool/rules";
import { engineSizes, valveViews, checkPlan } from "../check/derive";
import { checkCsvFile } from "../check/csv";
import { lastShims, previousCheck } from "../check/previous";
import type { LocalEngine, LocalReading } from "../sync/local-db";
import { trayForEngine } from "../check/pool";

/**
 * The account export, version 1: this schema is its document (DEVELOPERS.md "Account export" says
 * the rest). One zip holds `lashwright.json` (this shape), one CSV per check under `csv/` written by
 * the same code as "Download CSV", and the photos under `photos/<id>.jpg` as the store keeps them.
 * The server and the phone write the same shape; the import reads it back. A new field that an older
 * reader may ignore keeps the version; a change of meaning or a removed field raises it, and a
 * reader refuses a version above its own (it cannot know what the newer fields mean).
 */
export const EXPORT_FORMAT = "lashwright-export";
export const EXPORT_SCHEMA_VERSION = 1;
export const EXPORT_DATA_ENTRY = "lashwright.json";
export const photoEntryName = (id: string) => `photos/${id}.jpg`;
export const PHOTO_ENTRY = /^photos\/([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})\.jpg$/;
export const CSV_ENTRY = /^csv\/[a-z0-9-]{1,140}\.csv$/;

/**
 * What an import reads at most (a zip bomb declares small and inflates large: every entry's
 * uncompressed size is checked before it is read and counted while it is, OWASP ASVS 5.0 5.2.3).
 * The photos are bounded again by the account's photo space.
 */
export const IMPORT_LIMITS = {
  /** the JSON document: years of weekly checks of a 24-valve engine are a few MB */
  dataBytes: 64 * 1024 * 1024,
  /** one CSV: a check's valves and plan */
  csvBytes: 1024 * 1024,
  /** one photo, as an upload may be */
  photoBytes: 10 * 1024 * 1024,
  /** entries of any kind */
  entries: 20_000,
} as const;

const iso = z.iso.datetime({ offset: true, error: "a time like 2024-05-31T12:00:00.000Z" });

export const exportEngine = engineFields.extend({ id: idSchema, timing: timingSchema }).superRefine(engineRules);

export const exportCheck = z.object({
  id: idSchema,
  engineId: idSchema,
  odometer: z.number().finite().min(0).max(9_999_999),
  measuredHot: z.boolean(),
  status: checkStatus,
  notes: z.string().max(4000).nullable(),
  startedAt: iso,
  closedAt: iso.nullable(),
});

/**
 * How a reading was found, said in words beside the stored fields: the clearance by blades (the go
 * and no-go pair kept) or typed in, the shim read off its stamp or measured with a micrometer.
 */
export const readingFound = z.object({
  clearance: z.enum(["blade", "typed"]).nullable(),
  shim: z.enum(["micrometer", "stamp"]).nullable(),
});

export const exportReading = z.intersection(
  readingInput,
  z.object({
    checkId: idSchema,
    fittedAt: iso.nullable(),
    found: readingFound,
  }),
);

const sizeCount = z.object({ size: positiveLengthMm, count: z.number().int().min(0) });

/** A check's shim plan as worked out from its readings and the tray (derived: an import works it out again). */
export const exportPlan = z.object({
  checkId: idSchema,
  assignments: z.array(
    z.object({ valve: z.string().max(16), size: positiveLengthMm, predicted: lengthMm, source: z.string().max(40) }),
  ),
  buy: z.array(sizeCount),
  toTray: z.array(sizeCount),
});

/** A comment the holder wrote on someone else's check (a mentor's advice): a record, not restored. */
export const exportCommentElsewhere = z.object({
  id: idSchema,
  checkId: idSchema,
  valve: z.string().max(16).nullable(),
  body: z.string().min(1).max(4000),
  createdAt: iso,
});

export const exportComment = exportCommentElsewhere.extend({
  /** written by the account's holder; a comment by someone else on their check is kept as a record, not restored */
  byMe: z.boolean(),
  authorName: z.string().max(120),
});

export const exportPhoto = z.object({
  id: idSchema,
  checkId: idSchema,
  valve: z.string().max(16).nullable(),
  commentId: idSchema.nullable(),
  /** as stored: the server's copies are JPEG; a phone's own copy is what its camera shrink made */
  contentType: z.string().max(60),
  bytes: z.number().int().min(0).max(IMPORT_LIMITS.photoBytes),
  width: z.number().int().min(1).max(20_000).nullable(),
  height: z.number().int().min(1).max(20_000).nullable(),
  createdAt: iso.nullable(),
  byMe: z.boolean(),
  /** the zip entry with its bytes, or null: not included (a phone that does not hold it) */
  file: z.string().regex(PHOTO_ENTRY).nullable(),
});

export const exportTrayItem = z.object({
  id: idSchema,
  size: positiveLengthMm,
  measuredSize: z.boolean(),
  count: z.number().int().min(0).max(10_000),
  shimDiameter: positiveLengthMm.nullable(),
});

/** A shim loan with a club member: a record of what was agreed, not restored (it involves the other member). */
export const exportLoan = z.object({
  id: idSchema,
  role: z.enum(["borrower", "lender"]),
  size: positiveLengthMm,
  count: z.number().int().min(0),
  state: z.enum(BORROW_STATES),
  returnSize: positiveLengthMm.nullable(),
  checkId: idSchema.nullable(),
  createdAt: iso,
  updatedAt: iso,
});

const MANY = 1_000_000;

export const exportDocument = z.object({
  format: z.literal(EXPORT_FORMAT),
  schemaVersion: z.literal(EXPORT_SCHEMA_VERSION),
  exportedAt: iso,
  /** the server's records, or a phone's local copy (which holds no loans, and only its own photos' bytes) */
  source: z.enum(["server", "phone"]),
  account: z
    .object({ name: z.string().max(120), email: z.string().max(254), displayUnit: z.enum(LENGTH_UNITS) })
    .nullable(),
  engines: z.array(exportEngine).max(MANY),
  checks: z.array(exportCheck).max(MANY),
  readings: z.array(exportReading).max(MANY),
  plans: z.array(exportPlan).max(MANY),
  comments: z.array(exportComment).max(MANY),
  commentsElsewhere: z.array(exportCommentElsewhere).max(MANY),
  photos: z.array(exportPhoto).max(MANY),
  tray: z.array(exportTrayItem).max(MANY),
  loans: z.array(exportLoan).max(MANY),
});

export type ExportDocument = z.output<typeof exportDocument>;
export type ExportEngine = z.output<typeof exportEngine>;
export type ExportCheck = z.output<typeof exportCheck>;
export type ExportReading = z.output<typeof exportReading>;
export type ExportPhoto = z.output<typeof exportPhoto>;
export type ExportComment = z.output<typeof exportComment>;
export type ExportCommentElsewhere = z.output<typeof exportCommentElsewhere>;
export type ExportTrayItem = z.output<typeof exportTrayItem>;
export type ExportLoan = z.output<typeof exportLoan>;
export type ExportPlan = z.output<typeof exportPlan>;

/** The keys of the document in the order both writers emit them (the arrays are streamed one by one). */
export const DOCUMENT_ARRAYS = [
  "engines",
  "checks",
  "readings",
  "plans",
  "comments",
  "commentsElsewhere",
  "photos",
  "tray",
  "loans",
] as const;

/** Why a file cannot be read, in the words the import answers with. */
export type ReadRefusal = { kind: "newer" | "damaged"; message: string };

/**
 * The version is read before the schema: a newer file is refused as newer (its fields may mean what
 * this reader does not know), not as damaged.
 */
export function checkVersion(json: unknown): ReadRefusal | null {
  if (typeof json !== "object" || json === null || Array.isArray(json))
    return { kind: "damaged", message: "The file's data is not an export (no document inside)" };
  const o = json as Record<string, unknown>;
  if (o.format !== EXPORT_FORMAT)
    return { kind: "damaged", message: "This is not a Lashwright export (its data does not say so)" };
  const v = o.schemaVersion;
  if (typeof v !== "number" || !Number.isInteger(v) || v < 1)
    return { kind: "damaged", message: "The export does not say which version of the format it is" };
  if (v > EXPORT_SCHEMA_VERSION)
    return {
      kind: "newer",
      message: `This export was made by a newer Lashwright (format version ${v}; this one reads up to ${EXPORT_SCHEMA_VERSION}). Nothing was imported.`,
    };
  return null;
}

/** Parse a document: the version first, then the schema, then the ids that must match each other. */
export function parseExport(json: unknown): { ok: true; doc: ExportDocument } | { ok: false; refusal: ReadRefusal } {
  const version = checkVersion(json);
  if (version) return { ok: false, refusal: version };
  const parsed = exportDocument.safeParse(json);
  if (!parsed.success) {
    const i = parsed.error.issues[0]!;
    return {
      ok: false,
      refusal: {
        kind: "damaged",
        message: `The export's data does not fit its format at ${i.path.join(".") || "the top"}: ${i.message}`,
      },
    };
  }
  const problem = referenceProblem(parsed.data);
  if (problem)
    return {
      ok: false,
      refusal: { kind: "damaged", message: `The export's records do not match each other: ${problem}` },
    };
  return { ok: true, doc: parsed.data };
}

/** The first id that names nothing, or is given twice, or a reading that its engine cannot have. */
export function referenceProblem(doc: ExportDocument): string | null {
  const seen = new Set<string>();
  const once = (what: string, id: string) => {
    if (seen.has(id)) return `${what} ${id} is given twice`;
    seen.add(id);
    return null;
  };
  const engines = new Map<string, ExportEngine>();
  for (const e of doc.engines) {
    const p = once("the id of engine", e.id);
    if (p) return p;
    engines.set(e.id, e);
  }
  const checks = new Map<string, ExportCheck>();
  for (const c of doc.checks) {
    const p = once("the id of check", c.id);
    if (p) return p;
    if (!engines.has(c.engineId)) return `check ${c.id} names engine ${c.engineId}, which is not in the file`;
    checks.set(c.id, c);
  }
  const valves = new Set<string>();
  for (const [i, r] of doc.readings.entries()) {
    const c = checks.get(r.checkId);
    if (!c) return `reading ${i} names check ${r.checkId}, which is not in the file`;
    const key = `${r.checkId}#${r.valve}#${r.round}`;
    if (valves.has(key)) return `check ${r.checkId} has valve ${r.valve} round ${r.round} twice`;
    valves.add(key);
    const e = engines.get(c.engineId)!;
    const wrong = Object.values(readingProblems({ ...e, shimSizes: engineSizes(e) }, [r]))[0];
    if (wrong) return `reading ${i} (check ${r.checkId}): ${wrong}`;
  }
  for (const p of doc.plans)
    if (!checks.has(p.checkId)) return `a plan names check ${p.checkId}, which is not in the file`;
  const comments = new Set<string>();
  for (const c of doc.comments) {
    const p = once("the id of comment", c.id);
    if (p) return p;
    if (!checks.has(c.checkId)) return `comment ${c.id} names check ${c.checkId}, which is not in the file`;
    comments.add(c.id);
  }
  for (const ph of doc.photos) {
    const p = once("the id of photo", ph.id);
    if (p) return p;
    if (!checks.has(ph.checkId)) return `photo ${ph.id} names check ${ph.checkId}, which is not in the file`;
    if (ph.commentId && !comments.has(ph.commentId))
      return `photo ${ph.id} names comment ${ph.commentId}, which is not in the file`;
    if (ph.file && ph.file !== photoEntryName(ph.id)) return `photo ${ph.id} points at ${ph.file}, not its own file`;
  }
  for (const t of doc.tray) {
    const p = once("the id of tray item", t.id);
    if (p) return p;
  }
  return null;
}

/** A reading as the file carries it, from the phone's record or the server's row (one shape for both). */
export function readingForFile(
  r: Pick<LocalReading, "checkId" | "valve" | "round" | ReadingValueField>,
  fittedAt: string | null,
): ExportReading {
  return { ...pick(r, ["checkId", "valve", "round", ...READING_VALUE_FIELDS]), fittedAt, found: foundOf(r) };
}

/** The words for how a reading was found, from its stored fields. */
export function foundOf(
  r: Pick<LocalReading, "method" | "feelerGo" | "measured" | "installedMicrometer" | "installedStamp">,
): z.output<typeof readingFound> {
  const clearance = r.measured == null && r.feelerGo == null ? null : r.method === "typed" ? "typed" : "blade";
  const shim = r.installedMicrometer != null ? "micrometer" : r.installedStamp != null ? "stamp" : null;
  return { clearance, shim };
}

/** An exported engine as the check screens read it (the phone's record shape). */
export const engineForScreens = (e: ExportEngine): LocalEngine => ({
  ...e,
  firingAngles: e.firingAngles ?? null,
  shimDiameter: e.shimDiameter ?? null,
  assembledShim: e.assembledShim ?? null,
  shimPosition: e.shimPosition ?? null,
  nearSide: e.nearSide ?? "exhaust",
});

const readingForScreens = (r: ExportReading): LocalReading => ({
  ...pick(r, ["checkId", "valve", "round"]),
  ...readingValues(r),
});

/**
 * One check's CSV and plan, exactly as "Download CSV" writes them: the same views, the plan against
 * the tray's sizes (the club pool and the plan's aim live on a phone, so neither is in it), and the
 * shims the previous check of the engine left where this one read none.
 */
export function checkFiles(
  engine: ExportEngine,
  check: ExportCheck,
  readings: ExportReading[],
  tray: ExportTrayItem[],
  previous: { check: ExportCheck; readings: ExportReading[] } | null,
): { csvName: string; csv: string; plan: ExportPlan | null } {
  const e = engineForScreens(engine);
  const before = lastShims(previous ? previous.readings.map(readingForScreens) : []);
  const views = valveViews(e, readings.map(readingForScreens), (v) => before.get(v) ?? e.assembledShim);
  let plan: ReturnType<typeof checkPlan> = null;
  try {
    plan = checkPlan(e, views, trayForEngine(e, tray).usable);
  } catch {
    // readings the planner cannot use (a shim far out of the series): the CSV has the valves without a plan
    plan = null;
  }
  const file = checkCsvFile(engine, check.odometer, check.startedAt.slice(0, 10), views, plan);
  const csvName = `csv/${check.id.slice(0, 8)}-${file.name}`;
  const csv = file.text;
  return {
    csvName,
    csv,
    plan: plan && {
      checkId: check.id,
      assignments: plan.assignments.map((a) => ({
        valve: a.valveId,
        size: a.size,
        predicted: a.predicted,
        source: a.source.kind === "valve" ? `from ${a.source.valveId}` : a.source.kind,
      })),
      buy: plan.buy.map((b) => ({ size: b.size, count: b.count })),
      toTray: plan.toTray.map((t) => ({ size: t.size, count: t.count })),
    },
  };
}

/** The check before this one on the same engine, by the rule the check screen uses. */
export function previousOf(check: ExportCheck, sameEngine: ExportCheck[]): ExportCheck | null {
  return previousCheck(check, sameEngine) ?? null;
}

/** The zip's name: the day it was made. */
/** The document's first fields, as both writers put them. */
export function exportHead(
  at: Date,
  source: ExportDocument["source"],
  account: NonNullable<ExportDocument["account"]> | null,
): Pick<ExportDocument, "format" | "schemaVersion" | "exportedAt" | "source" | "account"> {
  return {
    format: EXPORT_FORMAT,
    schemaVersion: EXPORT_SCHEMA_VERSION,
    exportedAt: at.toISOString(),
    source,
    account: account && { name: account.name, email: account.email, displayUnit: account.displayUnit },
  };
}

export const exportFileName = (at: Date, source: "server" | "phone") =>
  `lashwright-${source === "phone" ? "phone-" : ""}export-${at.toISOString().slice(0, 10)}.zip`;
