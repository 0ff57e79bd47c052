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

export const ENGINE_PRESETS: EnginePreset[] = [
  {
    key: "i4-16",
    label: "Inline four, four valves per cylinder, 0.05 mm series",
    cylinders: 4,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1, 3, 4, 2],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
  {
    key: "i4-8",
    label: "Inline four, two valves per cylinder, 0.05 mm series",
    cylinders: 4,
    intakePerCylinder: 1,
    exhaustPerCylinder: 1,
    firingOrder: [1, 3, 4, 2],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "over",
  },
  {
    key: "single-2",
    label: "Single, two valves, 0.025 mm series",
    cylinders: 1,
    intakePerCylinder: 1,
    exhaustPerCylinder: 1,
    firingOrder: [1],
    shims: { min: 1.2, max: 3.0, step: 0.025 },
    shimPosition: "under",
  },
  {
    key: "single-4",
    label: "Single, four valves, 0.05 mm series",
    cylinders: 1,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
  {
    key: "v2-90",
    label: "90 degree V-twin, four valves per cylinder (fires 270/450)",
    cylinders: 2,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1, 2],
    firingAngles: [0, 270],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
  {
    key: "p2-360",
    label: "Parallel twin, 360 degree crank, four valves per cylinder",
    cylinders: 2,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1, 2],
    firingAngles: [0, 360],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
  {
    key: "i3-12",
    label: "Inline three, four valves per cylinder, 0.05 mm series",
    cylinders: 3,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1, 2, 3],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
  {
    key: "i6-24",
    label: "Inline six, four valves per cylinder, 0.05 mm series",
    cylinders: 6,
    intakePerCylinder: 2,
    exhaustPerCylinder: 2,
    firingOrder: [1, 5, 3, 6, 2, 4],
    shims: { min: 2.5, max: 3.3, step: 0.05 },
    shimPosition: "under",
  },
];
