import { parseOrThrow } from "./errors";
import { driftInputSchema } from "./schemas";
import { toNm, type OdometerUnit } from "./units";

export interface DriftPoint {
  odometer: number;
  installed: number;
  measured: number;
}

/**
 * What the checks say about a valve, in the words the screen uses:
 * - few-checks: fewer than three checks (two points always make a line, whatever the readings)
 * - short-distance: the checks span less than a real distance
 * - steady: the fitted change over the span is less than one blade step: the valve stays put
 * - closing / opening: the line moves by more than a blade step and its 95% range excludes zero
 * - unclear: it moves by more than a blade step, but the readings scatter too much to say which way
 */
export type DriftVerdict = "few-checks" | "short-distance" | "steady" | "closing" | "opening" | "unclear";

export interface DriftResult {
  /** least-squares slope of the gap (installed + measured), mm per 1,000 odometer units; negative = closing */
  slopePerThousandKm: number | null;
  /** odometer at which the clearance with the current shim reaches lowerLimit on the fitted line; null when not closing */
  limitAtOdometer: number | null;
  verdict: DriftVerdict;
  /** checks and the odometer span they cover */
  checks: number;
  span: number;
  /**
   * Where the limit is reached, from the 95% range of the slope (rounded; `to` null when the slower
   * end of the range does not close at all). Only for a closing valve.
   */
  limitRange: { from: number; to: number | null } | null;
}

/** A trend is drawn over at least this many odometer units (our own choice: half a short service interval). */
export const MIN_TREND_SPAN = { km: 2000, mi: 1250, h: 50 } as const;
/** The step of a metric feeler set at valve clearances (docs/trade.md: hundredths; 0.05 mm steps common practice). */
export const DEFAULT_RESOLUTION_MM = 0.05;

/**
 * Two-sided 95% critical values of Student's t for 1 to 30 degrees of freedom (NIST/SEMATECH
 * e-Handbook of Statistical Methods, 1.3.6.7.2, from memory; checked against the t density in the
 * unit tests); 1.96 (the normal) beyond.
 */
const T95 = [
  12.706, 4.303, 3.182, 2.776, 2.571, 2.447, 2.365, 2.306, 2.262, 2.228, 2.201, 2.179, 2.16, 2.145, 2.131, 2.12, 2.11,
  2.101, 2.093, 2.086, 2.08, 2.074, 2.069, 2.064, 2.06, 2.056, 2.052, 2.048, 2.045, 2.042,
];
export function t95(df: number): number {
  return df >= 1 && df <= 30 ? T95[df - 1]! : 1.96;
}

/** Round a projected odometer for the screen: 500 km or mi, 10 hours. */
export function roundOdometer(x: number, unit: OdometerUnit = "km"): number {
  const step = unit === "h" ? 10 : 500;
  return Math.round(x / step) * step;
}

const nothing = (checks: number, span: number, verdict: DriftVerdict): DriftResult => ({
  slopePerThousandKm: null,
  limitAtOdometer: null,
  verdict,
  checks,
  span,
  limitRange: null,
});

/**
 * Drift of one valve (README "The computation core"). The wear signal is the gap, installed shim + measured
 * clearance: it does not jump when a shim is changed and shrinks as the valve sinks into its seat.
 * An ordinary least-squares line of gap against odometer; the clearance with the current shim is
 * gap - shim, so the limit is reached where the line meets lowerLimit + shim.
 *
 * Whether the line means anything: the slope's standard error from the residuals (the textbook
 * formula, NIST/SEMATECH e-Handbook 4.4.4.3 / any regression text), but never below what the blades
 * allow: a reading is only known to a blade step, taken as a rectangular spread of standard
 * deviation step / sqrt(12) (JCGM 100:2008, GUM 4.3.7). The 95% range of the slope is
 * slope +- t(n-2) x SE; the limit's range is where the lines through the mean point with those two
 * slopes meet the limit. Readings that fall exactly on a line do not make it certain.
 */
export function driftProjection(input: {
  points: DriftPoint[];
  lowerLimit: number;
  currentShim?: number;
  resolution?: number;
  minSpan?: number;
}): DriftResult {
  const d = parseOrThrow(driftInputSchema, input, "drift input");
  const n = d.points.length;
  const odo = d.points.map((p) => p.odometer);
  const span = n ? Math.max(...odo) - Math.min(...odo) : 0;
  if (n < 2) return nothing(n, span, "few-checks");
  // Work in nanometres and thousands of odometer units so the sums stay well inside double precision.
  const xs = odo.map((o) => o / 1000);
  const ys = d.points.map((p) => toNm(p.installed) + toNm(p.measured));
  const mx = xs.reduce((a, b) => a + b, 0) / n;
  const my = ys.reduce((a, b) => a + b, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (xs[i]! - mx) ** 2;
    sxy += (xs[i]! - mx) * (ys[i]! - my);
  }
  if (sxx === 0) return nothing(n, span, n < 3 ? "few-checks" : "short-distance"); // every check at one odometer reading
  const slopeNm = sxy / sxx; // nm per 1,000
  const intercept = my - slopeNm * mx;
  const slopePerThousandKm = slopeNm / 1e6;
  const shim = d.currentShim ?? d.points[n - 1]!.installed;
  const targetGap = toNm(d.lowerLimit) + toNm(shim);
  const limitAtOdometer = slopeNm < 0 ? ((targetGap - intercept) / slopeNm) * 1000 : null;
  const base = { slopePerThousandKm, limitAtOdometer, checks: n, span, limitRange: null };
  if (n < 3) return { ...base, verdict: "few-checks" };
  if (span < (d.minSpan ?? MIN_TREND_SPAN.km)) return { ...base, verdict: "short-distance" };

  const stepNm = toNm(d.resolution ?? DEFAULT_RESOLUTION_MM);
  let sse = 0;
  for (let i = 0; i < n; i++) sse += (ys[i]! - (intercept + slopeNm * xs[i]!)) ** 2;
  const sigma = Math.max(Math.sqrt(sse / (n - 2)), stepNm / Math.sqrt(12));
  const half = t95(n - 2) * (sigma / Math.sqrt(sxx));
  const [fast, slow] = [slopeNm - half, slopeNm + half];
  // a change the blades can resolve: more than one step over the whole span
  const moved = Math.abs(slopeNm) * (span / 1000) > stepNm;
  if (!moved) return { ...base, verdict: "steady" };
  if (slow < 0) {
    // through the mean point: the faster slope reaches the limit sooner
    const at = (b: number) => (mx + (targetGap - my) / b) * 1000;
    return { ...base, verdict: "closing", limitRange: { from: at(fast), to: at(slow) } };
  }
  if (fast > 0) return { ...base, verdict: "opening" };
  return { ...base, verdict: "unclear" };
}

export interface ValveDrift {
  valveId: string;
  slopePerThousandKm: number | null;
  /** without a verdict the slope is taken at its word (older callers and tests) */
  verdict?: DriftVerdict;
}

/**
 * Valves closing notably faster than their neighbours: a valve whose closing is a real trend (its
 * verdict "closing") at a rate more than twice the median of the engine's other valves that have a
 * trend of any kind, and at least `minRate` mm per 1,000. A valve that keeps closing points to seat or
 * valve wear, a job for the head rather than another shim (docs/trade.md, common practice). The
 * factor 2 and the floor are our own choice, not a standard.
 */
export function fastClosingValves(valves: ValveDrift[], minRate = 0.005): string[] {
  const judged = valves.filter(
    (v) => v.slopePerThousandKm !== null && v.verdict !== "few-checks" && v.verdict !== "short-distance",
  );
  const rates = judged.map((v) => ({
    id: v.valveId,
    rate: -(v.slopePerThousandKm as number),
    real: v.verdict === undefined || v.verdict === "closing",
  }));
  if (rates.length < 3) return [];
  const out: string[] = [];
  for (const v of rates) {
    if (!v.real) continue;
    const others = rates
      .filter((o) => o.id !== v.id)
      .map((o) => Math.max(0, o.rate))
      .sort((a, b) => a - b);
    const mid = others.length / 2;
    const median = others.length % 2 ? others[Math.floor(mid)]! : (others[mid - 1]! + others[mid]!) / 2;
    if (v.rate >= minRate && v.rate > 2 * median) out.push(v.id);
  }
  return out;
}
