/**
 * Exact length arithmetic. Every length in lib/lash is millimetres as a plain number at the edges and
 * whole nanometres inside, so sums of decimals never drift (2.55 never becomes 2.5499999) and inch
 * blades are exact too: 1 in = 25.4 mm exactly (International Yard and Pound Agreement, 1959), so
 * 0.001 in = 25,400 nm and 0.0001 in = 2,540 nm are whole numbers.
 */
export const NM_PER_MM = 1_000_000;
export const NM_PER_INCH = 25_400_000;
export const MM_PER_INCH = 25.4;

/** Millimetres to whole nanometres (nearest). */
export function toNm(mm: number): number {
  return Math.round(mm * NM_PER_MM);
}

/** Whole nanometres to millimetres; dividing an integer by 10^6 gives the double nearest the decimal. */
export function fromNm(nm: number): number {
  return nm / NM_PER_MM;
}

/**
 * Two lengths in mm compared in whole nanometres: negative when a is shorter, 0 when they are the same
 * length, positive when a is longer. The one comparison of lengths outside the core: a float compare
 * with an epsilon calls lengths 0.8 nm apart equal and 0.4 nm apart different at other magnitudes.
 */
export function compareLengths(a: number, b: number): number {
  return toNm(a) - toNm(b);
}

/** Whether two lengths in mm are the same to the nanometre (0.1 + 0.2 is 0.3). */
export function sameLength(a: number, b: number): boolean {
  return toNm(a) === toNm(b);
}

export function inchesToMm(inches: number): number {
  if (!Number.isFinite(inches)) throw new RangeError("inchesToMm: not a finite number");
  return fromNm(Math.round(inches * NM_PER_INCH));
}

export function mmToInches(mm: number): number {
  if (!Number.isFinite(mm)) throw new RangeError("mmToInches: not a finite number");
  return mm / MM_PER_INCH;
}

/** The units a length is shown in; stored lengths are always millimetres. */
export const LENGTH_UNITS = ["mm", "in"] as const;
export type LengthUnit = (typeof LENGTH_UNITS)[number];

/** What an engine's odometer counts: kilometres, miles, or hours on an hour meter. */
export const ODOMETER_UNITS = ["km", "mi", "h"] as const;
export type OdometerUnit = (typeof ODOMETER_UNITS)[number];

/**
 * Display rounding (README "The computation core"): mm to 0.01, or 0.001 for micrometer-measured shims;
 * inches to 0.0001. Returns the rounded number in the display unit.
 */
export function roundForDisplay(mm: number, unit: LengthUnit, fine = false): number {
  if (unit === "in") return Math.round(mmToInches(mm) * 10_000) / 10_000;
  const places = fine ? 1000 : 100;
  return Math.round(toNm(mm) / (NM_PER_MM / places)) / places;
}

/**
 * The fewest decimals, from `least` to `most`, that write a length exactly in this unit (lengths are
 * whole nanometres, so the test is exact); `least` when none does, which is the display rounding of
 * README "The computation core". So a typed 0.075 mm stays 0.075, a 0.08 blade is 0.08, and a band given in mm
 * on an engine shown in inches is rounded to 0.0001 in.
 */
function placesFor(mm: number, unit: LengthUnit, least: number, most: number): number {
  const nm = toNm(mm);
  for (let p = least; p <= most; p++) {
    if (unit === "mm" ? nm % 10 ** (6 - p) === 0 : (nm * 10 ** p) % NM_PER_INCH === 0) return p;
  }
  return least;
}

/**
 * A length as the number it was entered or measured as, in the display unit and without the unit:
 * millimetres with 2 or 3 decimals (as many as the value holds; "fine" always 3, for a micrometer
 * reading to 0.001 mm or a shim series in 0.025 mm steps), inches with 4 or 5. The one formatter of
 * lengths on every screen, the printed worksheet and the mails.
 */
export function lengthNumber(mm: number, unit: LengthUnit, fine = false): string {
  if (!Number.isFinite(mm)) throw new RangeError("lengthNumber: not a finite number");
  const places = unit === "in" ? placesFor(mm, "in", 4, 5) : fine ? 3 : placesFor(mm, "mm", 2, 3);
  const value = unit === "in" ? toNm(mm) / NM_PER_INCH : toNm(mm) / NM_PER_MM;
  // toFixed on the double nearest the exact decimal: at most 5 places, far inside a double's 15 digits
  return (Math.round(value * 10 ** places) / 10 ** places).toFixed(places);
}

/** A length as text with its unit, e.g. "0.27 mm", "0.075 mm", "0.0106 in" (see lengthNumber). */
export function formatLength(mm: number, unit: LengthUnit, fine = false): string {
  return `${lengthNumber(mm, unit, fine)} ${unit}`;
}

/** A shim's size in mm: a micrometer reading or a fine series to 0.001, a stamp as it is marked. */
export function shimNumber(mm: number, fine = false): string {
  return lengthNumber(mm, "mm", fine);
}
