import Papa from "papaparse";
import { toNm, type ShimPlan, type ShimPosition } from "../lash";
import type { ValveView } from "./derive";

/**
 * A check as CSV: one row per valve (each row also says where the engine's shims sit) (the shim fitted in this check, if any, and the plan's shim),
 * then the buy list, what to borrow and what goes back to the
 * tray, told apart by the first column. Every length is millimetres with the same number of
 * decimals throughout the file (the fewest, from 2, that hold every value exactly: 3 once a
 * micrometer reading or a 0.025 series is in it, 4 for inch blades), with a point, so a
 * spreadsheet reads each column as one kind of number. The import (csv-import.ts) reads it back.
 */
export const CSV_COLUMNS = [
  "record",
  "engine",
  "date",
  "odometer",
  "odometer_unit",
  "shim_position",
  "valve",
  "round",
  "shim_mm",
  "micrometer_mm",
  "go_mm",
  "no_go_mm",
  "clearance_mm",
  "band_min_mm",
  "band_max_mm",
  "state",
  "fitted_shim_mm",
  "plan_shim_mm",
  "predicted_mm",
  "source",
  "count",
] as const;
type Column = (typeof CSV_COLUMNS)[number];

/** The fewest decimals (2 to 6) that write every length exactly: lengths are whole nanometres. */
export function decimalsFor(lengths: number[]): number {
  let places = 2;
  for (const mm of lengths) while (places < 6 && toNm(mm) % 10 ** (6 - places) !== 0) places++;
  return places;
}

/** The file's name: the engine's name (letters and digits only), the date and the odometer. */
export function csvFileName(engine: string, date: string, odometer: number, unit: string): string {
  const slug =
    engine
      .normalize("NFKD")
      .replace(/[\u0300-\u036f]/g, "")
      .toLowerCase()
      .replace(/[^\p{L}\p{N}]+/gu, "-")
      .replace(/^-+|-+$/g, "")
      .slice(0, 60)
      .replace(/-+$/, "") || "engine";
  return `${slug}-${date}-${odometer}${unit}.csv`;
}

export function checkCsv(
  meta: { engine: string; odometer: number; odometerUnit: string; date: string; shimPosition?: ShimPosition | null },
  views: ValveView[],
  plan: ShimPlan | null,
): string {
  const byValve = new Map(plan?.assignments.map((a) => [a.valveId, a]) ?? []);
  const rows: Partial<Record<Column, string | number | null | undefined>>[] = [];
  const lengths: number[] = [];
  const mm = (v: number | null | undefined) => {
    if (v == null) return null;
    lengths.push(v);
    return v;
  };
  // where the shims sit ("over" or "under" the bucket; empty: not said), beside the odometer's unit
  const { engine, date, odometer, odometerUnit, shimPosition } = meta;
  const base = { engine, date, odometer, odometer_unit: odometerUnit, shim_position: shimPosition ?? null };
  for (const v of views) {
    const a = byValve.get(v.valve.id);
    const r = v.latest;
    rows.push({
      record: "valve",
      ...base,
      valve: v.valve.id,
      round: r?.round ?? null,
      shim_mm: mm(r?.installedStamp ?? v.installed),
      micrometer_mm: mm(r?.installedMicrometer),
      go_mm: mm(r?.feelerGo),
      no_go_mm: mm(r?.feelerNoGo),
      clearance_mm: mm(v.measured),
      band_min_mm: mm(v.spec.min),
      band_max_mm: mm(v.spec.max),
      state: v.state,
      fitted_shim_mm: mm(r?.fittedShim),
      plan_shim_mm: a && a.source.kind !== "keep" ? mm(a.size) : null,
      predicted_mm: a ? mm(a.predicted) : null,
      source: a ? (a.source.kind === "valve" ? `from ${a.source.valveId}` : a.source.kind) : null,
    });
  }
  for (const b of plan?.buy ?? [])
    rows.push({ record: "buy", ...base, plan_shim_mm: mm(b.size), source: "buy", count: b.count });
  for (const b of plan?.borrow ?? [])
    rows.push({ record: "borrow", ...base, plan_shim_mm: mm(b.size), source: "club", count: b.count });
  for (const t of plan?.toTray ?? []) rows.push({ record: "to tray", ...base, shim_mm: mm(t.size), count: t.count });

  const places = decimalsFor(lengths);
  const data = rows.map((r) =>
    CSV_COLUMNS.map((c) => {
      const v = r[c];
      if (v == null) return "";
      // a length: fixed decimals from the exact nanometres, never the float's own digits
      if (c.endsWith("_mm") && typeof v === "number") return (toNm(v) / 1e6).toFixed(places);
      return typeof v === "number" ? String(v) : defuseFormula(v);
    }),
  );
  // RFC 4180 quoting (a cell with a comma, a quote or a line break is quoted, quotes doubled)
  return Papa.unparse({ fields: [...CSV_COLUMNS], data }, { newline: "\r\n" }) + "\r\n";
}

/** The first characters that make a spreadsheet read a cell as a formula (OWASP "CSV Injection"). */
const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * A text cell a spreadsheet would run as a formula is written as text, behind an apostrophe. Decided
 * by the first character alone, whatever follows: a library's guard that matched the whole cell
 * missed "=HYPERLINK(...)" followed by a line break. Numbers are written by us and never guarded (a
 * negative one stays a number). The import (csv-import.ts) takes the apostrophe off again.
 */
/** A check's CSV and its file's name: what "Download CSV" saves and the export file carries. */
export function checkCsvFile(
  engine: { name: string; odometerUnit: string; shimPosition?: ShimPosition | null },
  odometer: number,
  date: string,
  views: ValveView[],
  plan: ShimPlan | null,
): { name: string; text: string } {
  const { name, odometerUnit } = engine;
  const meta = { engine: name, odometer, odometerUnit, date, shimPosition: engine.shimPosition ?? null };
  return { name: csvFileName(name, date, odometer, odometerUnit), text: checkCsv(meta, views, plan) };
}

export function defuseFormula(text: string): string {
  return FORMULA_START.test(text) ? `'${text}` : text;
}
