import { formatLength, type ShimPlan } from "../lash";
import type { ValveView } from "./derive";

/** A check as CSV (RFC 4180: comma-separated, fields with commas, quotes or line breaks quoted). */
const cell = (v: string | number | null | undefined) => {
  const s = v == null ? "" : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
};

export function checkCsv(meta: { engine: string; odometer: number; odometerUnit: string; date: string }, views: ValveView[], plan: ShimPlan | null): string {
  const byValve = new Map(plan?.assignments.map((a) => [a.valveId, a]) ?? []);
  const head = ["engine", "odometer", "unit", "date", "valve", "round", "shim_mm", "micrometer_mm", "go_mm", "no_go_mm", "clearance_mm", "band_min_mm", "band_max_mm", "state", "new_shim_mm", "predicted_mm", "source"];
  const rows = views.map((v) => {
    const a = byValve.get(v.valve.id);
    const r = v.latest;
    return [
      meta.engine,
      meta.odometer,
      meta.odometerUnit,
      meta.date,
      v.valve.id,
      r?.round ?? "",
      r?.installedStamp ?? v.installed ?? "",
      r?.installedMicrometer ?? "",
      r?.feelerGo ?? "",
      r?.feelerNoGo ?? "",
      v.measured ?? "",
      v.spec.min,
      v.spec.max,
      v.state,
      a && a.source.kind !== "keep" ? a.size : "",
      a ? formatLength(a.predicted, "mm").replace(" mm", "") : "",
      a ? (a.source.kind === "valve" ? `from ${a.source.valveId}` : a.source.kind) : "",
    ];
  });
  return [head, ...rows].map((r) => r.map(cell).join(",")).join("\r\n") + "\r\n";
}
