/**
 * Starting points for an engine profile, by configuration only (never a maker's model or its
 * specification). The spec bands here are placeholders to be replaced with the manual's figures.
 * Where the shims sit is the usual one for the layout (common practice; from memory): four valves
 * per cylinder and small shims under the bucket on most modern engines; the older two-valve inline
 * four with its shims over the bucket. The mechanic changes it when their engine differs.
 */
import type { ShimPosition } from "./schemas";

export interface EnginePreset {
  key: string;
  label: string;
  cylinders: number;
  intakePerCylinder: number;
  exhaustPerCylinder: number;
  firingOrder: number[];
  firingAngles?: number[];
  shims: { min: number; max: number; step: number };
  shimPosition: ShimPosition;
}

/** The usual shim series: 2.50 to 3.30 mm in 0.05 mm steps, and a finer one for small singles. */
const SERIES_05 = { min: 2.5, max: 3.3, step: 0.05 };
const SERIES_025 = { min: 1.2, max: 3.0, step: 0.025 };

/** key, label, cylinders, valves per cylinder on each side, firing order, shim series, where shims sit, firing angles */
type Row = [string, string, number, number, number[], EnginePreset["shims"], ShimPosition, number[]?];

const ROWS: Row[] = [
  ["i4-16", "Inline four, four valves per cylinder, 0.05 mm series", 4, 2, [1, 3, 4, 2], SERIES_05, "under"],
  ["i4-8", "Inline four, two valves per cylinder, 0.05 mm series", 4, 1, [1, 3, 4, 2], SERIES_05, "over"],
  ["single-2", "Single, two valves, 0.025 mm series", 1, 1, [1], SERIES_025, "under"],
  ["single-4", "Single, four valves, 0.05 mm series", 1, 2, [1], SERIES_05, "under"],
  ["v2-90", "90 degree V-twin, four valves per cylinder (fires 270/450)", 2, 2, [1, 2], SERIES_05, "under", [0, 270]],
  ["p2-360", "Parallel twin, 360 degree crank, four valves per cylinder", 2, 2, [1, 2], SERIES_05, "under", [0, 360]],
  ["i3-12", "Inline three, four valves per cylinder, 0.05 mm series", 3, 2, [1, 2, 3], SERIES_05, "under"],
  ["i6-24", "Inline six, four valves per cylinder, 0.05 mm series", 6, 2, [1, 5, 3, 6, 2, 4], SERIES_05, "under"],
];

export const ENGINE_PRESETS: EnginePreset[] = ROWS.map(
  ([key, label, cylinders, perSide, firingOrder, shims, shimPosition, firingAngles]) => ({
    key,
    label,
    cylinders,
    intakePerCylinder: perSide,
    exhaustPerCylinder: perSide,
    firingOrder,
    ...(firingAngles ? { firingAngles } : {}),
    shims: { ...shims },
    shimPosition,
  }),
);
