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

export function inchesToMm(inches: number): number {
  if (!Number.isFinite(inches)) throw new RangeError("inchesToMm: not a finite number");
  return fromNm(Math.round(inches * NM_PER_INCH));
}

export function mmToInches(mm: number): number {
  if (!Number.isFinite(mm)) throw new RangeError("mmToInches: not a finite number");
  return mm / MM_PER_INCH;
}

export type LengthUnit = "mm" | "in";

/**
 * Display rounding (DESIGN.md section 4): mm to 0.01, or 0.001 for micrometer-measured shims;
 * inches to 0.0001. Returns the rounded number in the display unit.
 */
export function roundForDisplay(mm: number, unit: LengthUnit, fine = false): number {
  if (unit === "in") return Math.round(mmToInches(mm) * 10_000) / 10_000;
  const places = fine ? 1000 : 100;
  return Math.round(toNm(mm) / (NM_PER_MM / places)) / places;
}

/** A length as text with its unit, e.g. "0.27 mm", "0.0106 in". */
export function formatLength(mm: number, unit: LengthUnit, fine = false): string {
  const value = roundForDisplay(mm, unit, fine);
  const digits = unit === "in" ? 4 : fine ? 3 : 2;
  return `${value.toFixed(digits)} ${unit}`;
}
