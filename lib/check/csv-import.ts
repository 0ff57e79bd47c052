import Papa from "papaparse";
import { compareLengths, fromNm, inchesToMm, lengthMm, toNm, valveNames, type LengthUnit } from "../lash";
import { readingInput, readingProblems, type ReadingInput } from "../schemas/records";
import { engineSizes } from "./derive";
import type { LocalEngine } from "../sync/local-db";
import { parseDecimal } from "../parse-decimal";

/**
 * Past checks from a CSV file (a spreadsheet, a paper log typed up, or this app's own export), read
 * into checks of one engine for a preview. Nothing here writes: the caller shows the preview and,
 * only when every row is sound, saves the checks through the outbox like any other change. Each
 * row that cannot be read says why, by its row number as a spreadsheet shows it (the header is 1).
 */

export const IMPORT_MAX_ROWS = 5000;
export const IMPORT_MAX_BYTES = 2 * 1024 * 1024;
/** Valve clearances are tenths of a millimetre (common practice); more than this is a unit mix-up. */
const MAX_CLEARANCE_MM = 1;

type Field =
  | "record"
  | "engine"
  | "date"
  | "odometer"
  | "valve"
  | "round"
  | "shim"
  | "micrometer"
  | "go"
  | "noGo"
  | "clearance"
  | "newShim"
  | "notes";

/** Header names a log may use for each field (lower case, words joined by "_", unit suffix removed). */
const ALIASES: Record<Field, string[]> = {
  record: ["record"],
  engine: ["engine"],
  date: ["date", "day", "checked_on"],
  odometer: ["odometer", "odo", "km", "miles", "mileage", "hours", "distance"],
  valve: ["valve"],
  round: ["round"],
  shim: ["shim", "installed", "installed_shim", "shim_in"],
  micrometer: ["micrometer", "micrometer_shim"],
  go: ["go", "go_blade", "feeler", "blade"],
  noGo: ["no_go", "nogo", "no_go_blade"],
  clearance: ["clearance", "gap", "lash", "measured"],
  newShim: ["new_shim", "fitted", "fitted_shim"],
  notes: ["notes", "note", "comment"],
};
const LENGTHS: Field[] = ["shim", "micrometer", "go", "noGo", "clearance", "newShim"];
const WORDS: Record<Field, string> = {
  record: "record",
  engine: "engine",
  date: "date",
  odometer: "odometer",
  valve: "valve",
  round: "round",
  shim: "shim",
  micrometer: "micrometer shim",
  go: "go blade",
  noGo: "no-go blade",
  clearance: "clearance",
  newShim: "new shim",
  notes: "notes",
};
const READING_FIELD_WORDS: Record<string, string> = {
  installedStamp: "shim",
  installedMicrometer: "micrometer shim",
  feelerGo: "go blade",
  feelerNoGo: "no-go blade",
  measured: "clearance",
  fittedShim: "new shim",
};

export type DateOrder = "dmy" | "mdy";

export interface ImportRow {
  /** the row as a spreadsheet numbers it: the header is row 1 */
  row: number;
  date: string | null;
  odometer: number | null;
  valve: string | null;
  reading: ReadingInput | null;
  /** why the row cannot be imported; empty when it can */
  errors: string[];
  /** a row read but not imported (a buy-list line of an exported check) */
  skipped?: string;
}

export interface ImportedCheck {
  /** YYYY-MM-DD */
  date: string;
  odometer: number;
  notes: string | null;
  readings: ReadingInput[];
  rows: number[];
}

export interface ImportPreview {
  /** problems with the file as a whole; none of its rows can be imported while there are any */
  fileErrors: string[];
  /** things worth knowing that do not stop the import */
  warnings: string[];
  /** each header cell and what it was read as (null: not read) */
  columns: { header: string; reads: string | null; unit: LengthUnit | "thou" | null }[];
  rows: ImportRow[];
  checks: ImportedCheck[];
  /** how dates like 03/04/2024 were read, when the file has such dates */
  dateOrder: DateOrder | null;
  /** true when the file alone cannot tell the day from the month: the user should choose */
  dateOrderOpen: boolean;
  ok: boolean;
}

type Engine = Pick<
  LocalEngine,
  "name" | "cylinders" | "intakePerCylinder" | "exhaustPerCylinder" | "shims" | "displayUnit"
>;

function headerKey(h: string): { field: Field | null; unit: LengthUnit | "thou" | null } {
  let k = h
    .trim()
    .toLowerCase()
    .replace(/[\s\-()[\]./]+/g, "_")
    .replace(/^_+|_+$/g, "");
  let unit: LengthUnit | "thou" | null = null;
  const u = /_(mm|in|inch|inches|thou)$/.exec(k);
  if (u) {
    unit = u[1] === "mm" ? "mm" : u[1] === "thou" ? "thou" : "in";
    k = k.slice(0, u.index);
  }
  const field = (Object.keys(ALIASES) as Field[]).find((f) => ALIASES[f].includes(k)) ?? null;
  return { field, unit };
}

/** A spreadsheet cell that was protected from running as a formula starts with an apostrophe. */
const clean = (s: string | undefined) =>
  (s ?? "")
    .trim()
    .replace(/^'(?=[=+\-@\t\r])/, "")
    .trim();

function parseLength(raw: string, unit: LengthUnit | "thou", decimalComma: boolean): number | string {
  const s = raw.replace(/\s/g, "");
  // a decimal comma: always for a length (no length has thousands), never mixed with a point; a
  // trailing one ("3,") only in a file whose numbers use commas; no length is negative
  const n = s.startsWith("-") || (s.endsWith(",") && !decimalComma) ? null : parseDecimal(s);
  if (n == null || !Number.isFinite(n)) return `"${raw}" is not a number`;
  const mm = unit === "mm" ? n : unit === "in" ? inchesToMm(n) : inchesToMm(n / 1000);
  const ok = lengthMm.safeParse(mm);
  return ok.success ? fromNm(toNm(mm)) : ok.error.issues[0]!.message;
}

function parseOdometer(raw: string, decimalComma: boolean): number | string {
  let s = raw.replace(/[\s'’_]/g, "");
  // thousands separators: commas in a file with decimal points, points in one with decimal commas
  if (/^\d{1,3}(,\d{3})+(\.\d+)?$/.test(s)) s = s.replace(/,/g, "");
  else if (/^\d{1,3}(\.\d{3})+(,\d+)?$/.test(s) && decimalComma) s = s.replace(/\./g, "");
  else if (!decimalComma && s.includes(",")) return `"${raw}" is not a distance or hours`;
  if (!/^\d+([.,]\d+)?$/.test(s)) return `"${raw}" is not a distance or hours`;
  const n = parseDecimal(s)!;
  return n > 9_999_999 ? "is more than 9,999,999" : n;
}

const pad = (n: number) => String(n).padStart(2, "0");

/** A date cell as [day-first reading, month-first reading] or a fixed one; null if not a date. */
function dateShapes(
  raw: string,
): { fixed?: { y: number; m: number; d: number }; a?: number; b?: number; y?: number; twoDigitYear?: boolean } | null {
  const s = raw.trim();
  let m = /^(\d{4})-(\d{1,2})-(\d{1,2})(?:[T ].*)?$/.exec(s);
  if (m) return { fixed: { y: +m[1]!, m: +m[2]!, d: +m[3]! } };
  m = /^(\d{4})\/(\d{1,2})\/(\d{1,2})$/.exec(s);
  if (m) return { fixed: { y: +m[1]!, m: +m[2]!, d: +m[3]! } };
  m = /^(\d{1,2})[./-](\d{1,2})[./-](\d{2}|\d{4})(?:[T ].*)?$/.exec(s);
  if (m) return { a: +m[1]!, b: +m[2]!, y: +m[3]!, twoDigitYear: m[3]!.length === 2 };
  return null;
}

function checkedDate(y: number, mo: number, d: number, today: string): string {
  const t = new Date(Date.UTC(y, mo - 1, d));
  if (mo < 1 || mo > 12 || t.getUTCDate() !== d || t.getUTCMonth() !== mo - 1)
    throw new Error("is not in the calendar");
  const iso = `${y}-${pad(mo)}-${pad(d)}`;
  if (y < 1950) throw new Error("is before 1950");
  if (iso > today) throw new Error("lies in the future");
  return iso;
}

export function readChecksCsv(
  text: string,
  engine: Engine,
  existing: { date: string; odometer: number }[],
  opts: { dateOrder?: DateOrder; today?: string } = {},
): ImportPreview {
  const today = opts.today ?? new Date().toISOString().slice(0, 10);
  const out: ImportPreview = {
    fileErrors: [],
    warnings: [],
    columns: [],
    rows: [],
    checks: [],
    dateOrder: null,
    dateOrderOpen: false,
    ok: false,
  };
  const done = () => ({
    ...out,
    ok: out.fileErrors.length === 0 && out.checks.length > 0 && out.rows.every((r) => r.errors.length === 0),
  });
  const body = text.replace(/^\uFEFF/, "");
  if (body.trim() === "") {
    out.fileErrors.push("The file is empty.");
    return done();
  }
  const parsed = Papa.parse<string[]>(body, {
    header: false,
    skipEmptyLines: false,
    delimitersToGuess: [",", ";", "\t", "|"],
  });
  const delimiter = parsed.meta.delimiter;
  const decimalComma = delimiter !== ",";
  const grid = parsed.data;
  const header = grid[0] ?? [];
  const dataRows = grid.slice(1);
  if (dataRows.filter((r) => r.some((c) => c.trim() !== "")).length > IMPORT_MAX_ROWS) {
    out.fileErrors.push(
      `The file has more than ${IMPORT_MAX_ROWS.toLocaleString("en")} rows: split it into smaller files.`,
    );
    return done();
  }

  const at: Partial<Record<Field, { index: number; unit: LengthUnit | "thou" | null }>> = {};
  header.forEach((h, index) => {
    const { field, unit } = headerKey(h);
    const dup = field && at[field];
    out.columns.push({
      header: h,
      reads: field && !dup ? WORDS[field] : null,
      unit: field && LENGTHS.includes(field) ? (unit ?? engine.displayUnit) : null,
    });
    if (dup)
      out.fileErrors.push(`Two columns are read as the ${WORDS[field]}: "${header[dup.index]}" and "${h}". Keep one.`);
    else if (field) at[field] = { index, unit };
  });
  const missing = (["date", "odometer", "valve"] as Field[]).filter((f) => !at[f]);
  if (!at.clearance && !at.go) missing.push("clearance");
  if (missing.length) {
    out.fileErrors.push(
      `The first row must name the columns; missing: ${missing.map((f) => WORDS[f]).join(", ")}. Found: ${header.map((h) => `"${h}"`).join(", ") || "nothing"}.`,
    );
    return done();
  }
  // the file's own columns without a unit are named, and the example of a named unit has one
  const unitless = LENGTHS.filter((f) => at[f] && !at[f]!.unit).map((f) => `"${header[at[f]!.index]}"`);
  if (unitless.length)
    out.warnings.push(
      `${unitless.length === 1 ? "The column" : "The columns"} ${unitless.join(", ")} ${unitless.length === 1 ? "has" : "have"} no unit in ${unitless.length === 1 ? "its name and is" : "their names and are"} read in ${engine.displayUnit === "mm" ? "millimetres" : "inches"}, this engine's unit. To say the unit, end a name with it, like "clearance_mm" or "clearance_in".`,
    );

  // the day and month order of dates like 03/04/2024: from the file when a day above 12 shows it
  const cells = (f: Field) => dataRows.map((r) => clean(r[at[f]!.index]));
  const shapes = cells("date").map(dateShapes);
  const dayFirst = shapes.some((s) => s?.a != null && s.a > 12);
  const monthFirst = shapes.some((s) => s?.b != null && s.b > 12);
  if (dayFirst && monthFirst) {
    out.fileErrors.push(
      "Some dates put the day first and others the month first: write them all one way (best as 2024-05-31).",
    );
    return done();
  }
  const ambiguous = shapes.some((s) => s?.a != null);
  out.dateOrder = ambiguous ? (dayFirst ? "dmy" : monthFirst ? "mdy" : (opts.dateOrder ?? "dmy")) : null;
  out.dateOrderOpen = ambiguous && !dayFirst && !monthFirst;

  const engineCells = at.engine ? [...new Set(cells("engine").filter(Boolean))] : [];
  if (engineCells.some((n) => n !== engine.name))
    out.warnings.push(
      `The file names ${engineCells.map((n) => `"${n}"`).join(", ")}; its checks will go to ${engine.name}.`,
    );

  const valveIds = new Set(valveNames(engine).map((v) => v.id));
  const shimSizes = engineSizes(engine);
  const existingKeys = new Set(existing.map((e) => `${e.date}#${e.odometer}`));
  const byCheck = new Map<string, ImportedCheck>();
  const seen = new Map<string, number>();

  dataRows.forEach((cellsOfRow, i) => {
    const rowNo = i + 2;
    if (cellsOfRow.every((c) => c.trim() === "")) return;
    const get = (f: Field) => (at[f] ? clean(cellsOfRow[at[f]!.index]) : "");
    const row: ImportRow = { row: rowNo, date: null, odometer: null, valve: null, reading: null, errors: [] };
    out.rows.push(row);
    if (cellsOfRow.length > header.length && cellsOfRow.slice(header.length).some((c) => c.trim() !== ""))
      row.errors.push("has more cells than the first row has column names");
    const record = get("record").toLowerCase();
    if (record && record !== "valve") {
      if (["buy", "borrow", "to tray"].includes(record))
        row.skipped = `a ${record} line of an exported plan: not history, left out`;
      else row.errors.push(`record "${get("record")}" is not one this file can hold (valve, buy, borrow, to tray)`);
      return;
    }
    // date
    const rawDate = get("date");
    const shape = dateShapes(rawDate);
    try {
      if (!rawDate) throw new Error("is empty");
      if (!shape) throw new Error("is not a date: write it as 2024-05-31");
      if (shape.twoDigitYear) throw new Error("has a two-digit year: write it in full (2024, not 24)");
      const { y, m, d } =
        shape.fixed ??
        (out.dateOrder === "mdy"
          ? { y: shape.y!, m: shape.a!, d: shape.b! }
          : { y: shape.y!, m: shape.b!, d: shape.a! });
      row.date = checkedDate(y, m, d, today);
    } catch (e) {
      row.errors.push(rawDate ? `date "${rawDate}" ${(e as Error).message}` : "date is empty");
    }
    // odometer
    const rawOdo = get("odometer");
    const odo = rawOdo === "" ? "is empty" : parseOdometer(rawOdo, decimalComma);
    if (typeof odo === "number") row.odometer = odo;
    else row.errors.push(`odometer ${odo}`);
    // valve
    const rawValve = get("valve").toUpperCase().replace(/\s/g, "");
    if (!rawValve) row.errors.push("valve is empty");
    else if (!valveIds.has(rawValve))
      row.errors.push(
        /^[IE]\d{1,2}\.\d$/.test(rawValve)
          ? `${engine.name} has no valve ${rawValve}`
          : `valve "${get("valve")}" is not named like I1.1 (intake, cylinder 1, first) or E4.2`,
      );
    else row.valve = rawValve;
    // lengths
    const len: Partial<Record<Field, number | null>> = {};
    for (const f of LENGTHS) {
      const raw = get(f);
      if (!at[f] || raw === "") {
        len[f] = null;
        continue;
      }
      const v = parseLength(raw, at[f]!.unit ?? engine.displayUnit, decimalComma);
      if (typeof v === "number") len[f] = v;
      else row.errors.push(`${WORDS[f]} ${v}`);
    }
    const measured = len.clearance ?? len.go ?? null;
    if (measured != null && measured > MAX_CLEARANCE_MM)
      row.errors.push(`clearance ${measured} mm is far more than a valve clearance: is the column in another unit?`);
    if (
      len.clearance != null &&
      len.go != null &&
      (compareLengths(len.clearance, len.go) < 0 || (len.noGo != null && compareLengths(len.clearance, len.noGo) >= 0))
    )
      row.errors.push(
        `clearance ${len.clearance} mm does not lie between the go blade (${len.go}) and the no-go blade (${len.noGo ?? "none"})`,
      );
    const rawRound = get("round");
    const round = rawRound === "" ? 0 : /^\d{1,2}$/.test(rawRound) ? Number(rawRound) : NaN;
    if (Number.isNaN(round)) row.errors.push(`round "${rawRound}" is not a whole number`);
    if (row.errors.length || !row.valve) return;
    // a valve with no clearance (left unmeasured, or an exported check's valve still to measure) is no history
    if (measured == null) {
      row.skipped = "no clearance or go blade: nothing measured, left out";
      return;
    }

    const candidate = {
      valve: row.valve,
      round,
      installedStamp: len.shim ?? null,
      installedMicrometer: len.micrometer ?? null,
      feelerGo: len.go ?? null,
      feelerNoGo: len.noGo ?? null,
      measured,
      method: len.go != null ? "feeler" : "typed",
      fittedShim: len.newShim ?? null,
    };
    const r = readingInput.safeParse(candidate);
    if (!r.success) {
      for (const issue of r.error.issues)
        row.errors.push(
          `${READING_FIELD_WORDS[String(issue.path[0])] ?? String(issue.path[0] ?? "reading")} ${issue.message}`,
        );
      return;
    }
    for (const [k, msg] of Object.entries(readingProblems({ ...engine, shimSizes }, [r.data])))
      row.errors.push(`${READING_FIELD_WORDS[k.split(".").at(-1)!] ?? "reading"}: ${msg}`);
    const key = `${row.date}#${row.odometer}`;
    if (existingKeys.has(key))
      row.errors.push(`a check on ${row.date} at ${row.odometer!.toLocaleString("en")} is already on this engine`);
    const twice = seen.get(`${key}#${row.valve}#${round}`);
    if (twice) row.errors.push(`${row.valve} is already in row ${twice} for the same check (same date and odometer)`);
    if (row.errors.length) return;
    seen.set(`${key}#${row.valve}#${round}`, rowNo);
    row.reading = r.data;
    const check = byCheck.get(key) ?? { date: row.date!, odometer: row.odometer!, notes: null, readings: [], rows: [] };
    byCheck.set(key, check);
    check.readings.push(r.data);
    check.rows.push(rowNo);
    const note = get("notes");
    if (note && !(check.notes ?? "").split("; ").includes(note))
      check.notes = (check.notes ? `${check.notes}; ${note}` : note).slice(0, 4000);
  });
  for (const e of parsed.errors) {
    // quoting problems are the file's, with the row they start in
    if (e.type === "Quotes")
      out.fileErrors.push(`A quoted cell is not closed${e.row != null ? ` (from row ${e.row + 1})` : ""}.`);
  }
  out.checks = [...byCheck.values()].sort((a, b) => a.date.localeCompare(b.date) || a.odometer - b.odometer);
  if (out.rows.length === 0) out.fileErrors.push("The file has column names but no rows.");
  return done();
}
