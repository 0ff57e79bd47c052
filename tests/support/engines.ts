/**
 * An engine's layout in test data: its cylinders in firing order, each with `valves` intake valves
 * and as many exhaust valves.
 */
export function layout(firingOrder: number[], valves: number) {
  return { cylinders: firingOrder.length, intakePerCylinder: valves, exhaustPerCylinder: valves, firingOrder };
}

/** Invented bands, intake 0.10-0.20 and exhaust 0.20-0.30 mm, on a 0.05 mm shim series from 2.50 to 3.30. */
export const USUAL_BANDS = {
  intake: { min: 0.1, max: 0.2 },
  exhaust: { min: 0.2, max: 0.3 },
  shims: { min: 2.5, max: 3.3, step: 0.05 },
};
