import { parseOrThrow, LashInputError } from "./errors";
import { recommendInputSchema, shimSeriesSchema, specSchema, type Spec } from "./schemas";
import { toNm, fromNm } from "./units";

/** A spec band in whole nanometres, with its target. */
export interface BandNm {
  min: number;
  max: number;
  target: number;
}

export function bandNm(spec: Spec): BandNm {
  const s = specSchema.parse(spec);
  const min = toNm(s.min);
  const max = toNm(s.max);
  // The middle of the band unless the engine names another target (README "The computation core").
  const target = s.target === undefined ? Math.round((min + max) / 2) : toNm(s.target);
  return { min, max, target };
}

export function inBand(clearanceNm: number, band: BandNm): boolean {
  return clearanceNm >= band.min && clearanceNm <= band.max;
}

/** Where a clearance lies against its band. */
export type BandSide = "tight" | "in-band" | "loose";

/**
 * A clearance in mm against a band in mm, decided in whole nanometres like every other decision of the
 * core: both edges belong to the band (0.10 mm is in a 0.10-0.20 band). No validation, so a screen may
 * ask it of a band still being typed.
 */
export function bandSide(clearanceMm: number, band: { min: number; max: number }): BandSide {
  const c = toNm(clearanceMm);
  return c < toNm(band.min) ? "tight" : c > toNm(band.max) ? "loose" : "in-band";
}

/** How far a clearance lies outside the band (0 inside). */
export function distanceFromBand(clearanceNm: number, band: BandNm): number {
  if (clearanceNm < band.min) return band.min - clearanceNm;
  if (clearanceNm > band.max) return clearanceNm - band.max;
  return 0;
}

/** Ascending shim sizes from min to max in steps of step, both ends included, exact decimals. */
export function shimSeries(min: number, max: number, step: number): number[] {
  const s = parseOrThrow(shimSeriesSchema, { min, max, step }, "shim series");
  const [lo, hi, st] = [toNm(s.min), toNm(s.max), toNm(s.step)];
  if ((hi - lo) % st !== 0)
    throw new LashInputError(`The series ${s.min}-${s.max} mm does not divide into steps of ${s.step} mm`, [
      { path: "step", message: "the range must be a whole number of steps" },
    ]);
  const count = (hi - lo) / st + 1;
  if (count > 2000)
    throw new LashInputError("A shim series may have at most 2000 sizes", [
      { path: "step", message: "step too small for this range" },
    ]);
  return Array.from({ length: count }, (_, i) => fromNm(lo + i * st));
}

export interface ShimRecommendation {
  /** installed + measured - target: the thickness that would hit the target exactly */
  ideal: number;
  /** the shim to fit (the installed one when no change is needed) */
  size: number;
  /** installed + measured - size */
  predicted: number;
  inSpec: boolean;
  /** false when the valve is already in its band, or no size would do better than the installed one */
  change: boolean;
}

interface Candidate {
  sizeNm: number;
  predictedNm: number;
}

/**
 * Pick among candidate shims for one valve: in band and nearest the target first; ties go to the
 * thinner shim, which leaves the valve looser (common practice: clearances close up in service).
 */
export function bestInBand(cands: Candidate[], band: BandNm): Candidate | undefined {
  let best: Candidate | undefined;
  for (const c of cands) {
    if (!inBand(c.predictedNm, band)) continue;
    if (!best) best = c;
    else {
      const d = Math.abs(c.predictedNm - band.target);
      const bd = Math.abs(best.predictedNm - band.target);
      if (d < bd || (d === bd && c.sizeNm < best.sizeNm)) best = c;
    }
  }
  return best;
}

/** When nothing lands in the band: the one nearest the band that still leaves a clearance. */
export function nearestBand(cands: Candidate[], band: BandNm): Candidate | undefined {
  let best: Candidate | undefined;
  for (const c of cands) {
    if (c.predictedNm <= 0) continue;
    if (!best) best = c;
    else {
      const d = distanceFromBand(c.predictedNm, band);
      const bd = distanceFromBand(best.predictedNm, band);
      if (d < bd || (d === bd && c.sizeNm < best.sizeNm)) best = c;
    }
  }
  return best;
}

export interface RecommendNm {
  idealNm: number;
  sizeNm: number;
  predictedNm: number;
  inSpec: boolean;
  change: boolean;
}

/** recommendShim on whole nanometres; shared with the planner so both choose alike. */
export function recommendNm(installedNm: number, measuredNm: number, band: BandNm, sizesNm: number[]): RecommendNm {
  const gap = installedNm + measuredNm;
  const idealNm = gap - band.target;
  if (inBand(measuredNm, band))
    return { idealNm, sizeNm: installedNm, predictedNm: measuredNm, inSpec: true, change: false };
  const cands = sizesNm.map((s) => ({ sizeNm: s, predictedNm: gap - s }));
  const chosen = (c: { sizeNm: number; predictedNm: number }, inSpec: boolean): RecommendNm => ({
    idealNm,
    sizeNm: c.sizeNm,
    predictedNm: c.predictedNm,
    inSpec,
    change: c.sizeNm !== installedNm,
  });
  const hit = bestInBand(cands, band);
  if (hit) return chosen(hit, true);
  // Nothing in the series reaches the band: keep the installed shim unless a size comes nearer.
  const near = nearestBand([{ sizeNm: installedNm, predictedNm: measuredNm }, ...cands], band);
  if (!near)
    throw new LashInputError(
      "No shim in the series leaves any clearance for this valve: check the readings and the series",
      [{ path: "sizes", message: "every size is thicker than the gap" }],
    );
  return chosen(near, false);
}

/**
 * The shim one valve needs (README "The computation core"): ideal = installed + measured - target; fit the
 * available size whose predicted clearance (installed + measured - size) lies in the band nearest the
 * target, the thinner on a tie. Use the micrometer thickness of the installed shim when known.
 */
export function recommendShim(input: {
  installed: number;
  measured: number;
  spec: Spec;
  sizes: number[];
}): ShimRecommendation {
  const p = parseOrThrow(recommendInputSchema, input, "shim input");
  const r = recommendNm(toNm(p.installed), toNm(p.measured), bandNm(p.spec), p.sizes.map(toNm));
  return {
    ideal: fromNm(r.idealNm),
    size: fromNm(r.sizeNm),
    predicted: fromNm(r.predictedNm),
    inSpec: r.inSpec,
    change: r.change,
  };
}
