import { parseOrThrow } from "./errors";
import { driftInputSchema } from "./schemas";
import { toNm } from "./units";

export interface DriftPoint {
  odometer: number;
  installed: number;
  measured: number;
}

export interface DriftResult {
  /** least-squares slope of the gap (installed + measured), mm per 1,000 odometer units; negative = closing */
  slopePerThousandKm: number | null;
  /** odometer at which the clearance with the current shim reaches lowerLimit; null when not closing */
  limitAtOdometer: number | null;
}

/**
 * Drift of one valve (DESIGN.md section 4.5). The wear signal is the gap, installed shim + measured
 * clearance: it does not jump when a shim is changed and shrinks as the valve sinks into its seat.
 * An ordinary least-squares line of gap against odometer; the clearance with the current shim is
 * gap - shim, so the limit is reached where the line meets lowerLimit + shim.
 */
export function driftProjection(input: { points: DriftPoint[]; lowerLimit: number; currentShim?: number }): DriftResult {
  const d = parseOrThrow(driftInputSchema, input, "drift input");
  if (d.points.length < 2) return { slopePerThousandKm: null, limitAtOdometer: null };
  // Work in nanometres and thousands of odometer units so the sums stay well inside double precision.
  const xs = d.points.map((p) => p.odometer / 1000);
  const ys = d.points.map((p) => toNm(p.installed) + toNm(p.measured));
  const n = xs.length;
  const mx = xs.reduce((a, b) => a + b, 0) / n;
  const my = ys.reduce((a, b) => a + b, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (xs[i]! - mx) ** 2;
    sxy += (xs[i]! - mx) * (ys[i]! - my);
  }
  if (sxx === 0) return { slopePerThousandKm: null, limitAtOdometer: null }; // every check at one odometer reading
  const slopeNm = sxy / sxx; // nm per 1,000
  const intercept = my - slopeNm * mx;
  const slopePerThousandKm = slopeNm / 1e6;
  if (slopeNm >= 0) return { slopePerThousandKm, limitAtOdometer: null };
  const shim = d.currentShim ?? d.points[d.points.length - 1]!.installed;
  const targetGap = toNm(d.lowerLimit) + toNm(shim);
  const limitAtOdometer = ((targetGap - intercept) / slopeNm) * 1000;
  return { slopePerThousandKm, limitAtOdometer };
}

export interface ValveDrift {
  valveId: string;
  slopePerThousandKm: number | null;
}

/**
 * Valves closing notably faster than their neighbours: the closing rate is more than twice the
 * median closing rate of the engine's other valves and at least `minRate` mm per 1,000. A valve
 * that keeps closing points to seat or valve wear, a job for the head rather than another shim
 * (shared/TRADE.md, common practice). The factor 2 and the floor are our own choice, not a standard.
 */
export function fastClosingValves(valves: ValveDrift[], minRate = 0.005): string[] {
  const rates = valves.filter((v) => v.slopePerThousandKm !== null).map((v) => ({ id: v.valveId, rate: -(v.slopePerThousandKm as number) }));
  if (rates.length < 3) return [];
  const out: string[] = [];
  for (const v of rates) {
    const others = rates.filter((o) => o.id !== v.id).map((o) => Math.max(0, o.rate)).sort((a, b) => a - b);
    const mid = others.length / 2;
    const median = others.length % 2 ? others[Math.floor(mid)]! : (others[mid - 1]! + others[mid]!) / 2;
    if (v.rate >= minRate && v.rate > 2 * median) out.push(v.id);
  }
  return out;
}
