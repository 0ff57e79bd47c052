import { compareLengths, inchesToMm, INCH_BLADES_THOU, METRIC_BLADES_MM, type LengthUnit } from "../lash";

/** How many blades the strip shows: three rows of six on a phone, so none is off screen. */
export const STRIP_BLADES = 18;

/** The engine's feeler set in mm: inch blades for an engine shown in inches, metric otherwise. */
export function feelerSet(displayUnit: LengthUnit): number[] {
  return displayUnit === "in" ? INCH_BLADES_THOU.map((t) => inchesToMm(t / 1000)) : METRIC_BLADES_MM;
}

/**
 * The blades offered for one valve: the ones nearest the middle of its band, thinnest first, so a
 * tight reading, an in-band one and a loose one are all a single tap with no scrolling. The next
 * thicker blade of the set is kept too, as the no-go of the thickest shown.
 */
export function bladeStrip(set: number[], band: { min: number; max: number }, count = STRIP_BLADES): number[] {
  const mid = (band.min + band.max) / 2;
  const sorted = [...set].sort((a, b) => a - b);
  const nearest = [...sorted].sort((a, b) => Math.abs(a - mid) - Math.abs(b - mid) || a - b).slice(0, count);
  return nearest.sort((a, b) => a - b);
}

/** The blade that will not enter when this one goes: the next thicker one in the set. */
export function noGoOf(set: number[], go: number): number | undefined {
  return [...set].sort((a, b) => a - b).find((b) => compareLengths(b, go) > 0);
}
