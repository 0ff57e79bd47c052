import type { ValveKind } from "./rotation";
import { compareLengths } from "./units";

export interface ValveName {
  /** "I2.1": intake, cylinder 2, first intake valve of that cylinder */
  id: string;
  cylinder: number;
  kind: ValveKind;
  index: number;
}

/** Every valve of an engine in diagram order: cylinder by cylinder, intakes then exhausts. */
export function valveNames(layout: {
  cylinders: number;
  intakePerCylinder: number;
  exhaustPerCylinder: number;
}): ValveName[] {
  const out: ValveName[] = [];
  for (let c = 1; c <= layout.cylinders; c++) {
    for (let i = 1; i <= layout.intakePerCylinder; i++)
      out.push({ id: `I${c}.${i}`, cylinder: c, kind: "intake", index: i });
    for (let i = 1; i <= layout.exhaustPerCylinder; i++)
      out.push({ id: `E${c}.${i}`, cylinder: c, kind: "exhaust", index: i });
  }
  return out;
}

const VALVE_ID = /^([IE])(\d{1,2})\.(\d)$/;

export function parseValveName(id: string): ValveName | null {
  const m = VALVE_ID.exec(id);
  if (!m) return null;
  return { id, kind: m[1] === "I" ? "intake" : "exhaust", cylinder: Number(m[2]), index: Number(m[3]) };
}

/**
 * A common 32-blade metric feeler set, mm (from memory of typical workshop sets; editable per engine).
 * Only used as the default strip of blades on the entry screen.
 */
export const METRIC_BLADES_MM = [
  0.02, 0.03, 0.04, 0.05, 0.06, 0.07, 0.08, 0.09, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33, 0.38, 0.4,
  0.45, 0.5, 0.55, 0.6, 0.63, 0.65, 0.7, 0.75, 0.8, 0.85, 0.9, 1.0,
];

/** Inch blades in thousandths, 0.0015 to 0.025 in (from memory of typical sets). */
export const INCH_BLADES_THOU = [1.5, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 22, 24, 25];

/** The go/no-go pair a blade set gives for a true clearance: the thickest that enters, and the next. */
export function bladesFor(clearanceMm: number, blades: number[]): { go: number; noGo?: number } | null {
  const sorted = [...blades].sort((a, b) => a - b);
  const i = sorted.findLastIndex((b) => compareLengths(b, clearanceMm) <= 0);
  if (i < 0) return null;
  return { go: sorted[i]!, noGo: sorted[i + 1] };
}
