import { parseOrThrow, LashInputError } from "./errors";
import { rotationInputSchema, type ValveTiming } from "./schemas";

export type ValveKind = "intake" | "exhaust";

export interface ValveRef {
  cylinder: number;
  kind: ValveKind;
}

export interface RotationStep {
  /** crank degrees from cylinder 1's firing TDC, in the engine's normal direction of rotation */
  crankAngle: number;
  /** the cylinder that is at firing TDC (top of its compression stroke) at this position, or was last */
  tdcCylinder: number;
  /** crank degrees past that cylinder's firing TDC: 0 at a TDC mark */
  pastTdc: number;
  valves: ValveRef[];
}

/**
 * Default timing for a street engine in crank degrees: IVO 20 BTDC, IVC 50 ABDC, EVO 50 BBDC,
 * EVC 20 ATDC (docs/trade.md: typical street petrol engine; common practice).
 */
export const DEFAULT_TIMING: ValveTiming = { ivo: 20, ivc: 50, evo: 50, evc: 20 };
/** Degrees added to both ends of each lift window for the cam's opening and closing ramps. */
export const DEFAULT_MARGIN = 20;

const mod720 = (a: number) => ((a % 720) + 720) % 720;

/**
 * Is a valve on its base circle at this phase? Phase is degrees after the cylinder's firing TDC. The
 * intake is lifted from 360-IVO to 540+IVC and the exhaust from 180-EVO to 360+EVC (docs/trade.md,
 * derived), each window widened by the margin on both sides.
 */
export function onBaseCircle(kind: ValveKind, phase: number, timing: ValveTiming, margin: number): boolean {
  const [open, close] = kind === "intake" ? [360 - timing.ivo, 540 + timing.ivc] : [180 - timing.evo, 360 + timing.evc];
  const start = open - margin;
  const length = close + margin - start;
  if (length >= 720) return false;
  return mod720(phase - start) > length;
}

/**
 * The crank-rotation guide (README "The computation core"): the fewest stops, among the cylinders' firing
 * TDCs, that together put every valve on its base circle. With at most 16 candidate stops the cover is
 * found exactly by trying subsets in order of size and then of rotation order.
 */
export function rotationGuide(input: {
  firingOrder: number[];
  firingAngles?: number[];
  timing?: ValveTiming;
  margin?: number;
}): { steps: RotationStep[] } {
  const r = parseOrThrow(rotationInputSchema, input, "rotation input");
  const n = r.firingOrder.length;
  const timing = r.timing ?? DEFAULT_TIMING;
  const margin = r.margin ?? DEFAULT_MARGIN;
  const raw = r.firingAngles ?? r.firingOrder.map((_, i) => (i * 720) / n);
  const tdc = new Map<number, number>(); // cylinder -> crank angle of its firing TDC, cylinder 1 at 0
  const offset = raw[r.firingOrder.indexOf(1)]!;
  r.firingOrder.forEach((cyl, i) => tdc.set(cyl, mod720(raw[i]! - offset)));

  const tdcStops = [...tdc.entries()]
    .map(([cyl, angle]) => ({ cyl, angle, pastTdc: 0 }))
    .sort((a, b) => a.angle - b.angle);
  const valves: ValveRef[] = [];
  for (let c = 1; c <= n; c++) valves.push({ cylinder: c, kind: "intake" }, { cylinder: c, kind: "exhaust" });
  // bit masks as bigints: 16 cylinders have 32 valve kinds, past the 31 bits a JS shift can hold
  const all = (1n << BigInt(valves.length)) - 1n;
  const freeAt = (angle: number) =>
    valves.map((v) => onBaseCircle(v.kind, angle - tdc.get(v.cylinder)!, timing, margin));

  /** the fewest stops among these that free every valve, trying subsets by size and then in rotation order */
  const cover = (stops: { angle: number }[]): number[] | undefined => {
    const masks = stops.map((st) => freeAt(st.angle).reduce((m, ok, i) => (ok ? m | (1n << BigInt(i)) : m), 0n));
    let chosen: number[] | undefined;
    const pick = (start: number, left: number, acc: number[], mask: bigint): boolean => {
      if (left === 0) {
        if (mask !== all) return false;
        chosen = [...acc];
        return true;
      }
      for (let i = start; i <= stops.length - left; i++) {
        acc.push(i);
        if (pick(i + 1, left - 1, acc, mask | masks[i]!)) return true;
        acc.pop();
      }
      return false;
    };
    for (let size = 1; size <= stops.length && !chosen; size++) pick(0, size, [], 0n);
    return chosen;
  };

  // Firing TDCs first: they have marks on the engine. Long cam timing (a single or a twin with wide
  // windows) can leave a valve lifted at every TDC; then stops every 30 degrees are offered too,
  // named by the last TDC before them. A lift window is at most 480 degrees (the schema's timing
  // bounds), so every valve is free for at least 200 of the 720 and a 30 degree grid always covers.
  let candidates = tdcStops;
  let chosen = cover(candidates);
  if (!chosen) {
    const extra = Array.from({ length: 24 }, (_, k) => k * 30)
      .filter((a) => !tdcStops.some((t) => Math.abs(t.angle - a) < 1e-9))
      .map((angle) => {
        const before = [...tdcStops].reverse().find((t) => t.angle <= angle) ?? tdcStops.at(-1)!;
        return { cyl: before.cyl, angle, pastTdc: mod720(angle - before.angle) };
      });
    candidates = [...tdcStops, ...extra].sort((a, b) => a.angle - b.angle);
    chosen = cover(candidates);
  }
  if (!chosen)
    throw new LashInputError(
      "With this valve timing and margin some valve is never on its base circle: check the timing or lower the margin",
      [{ path: "margin", message: "no crank position frees every valve" }],
    );

  const listed = new Set<number>();
  const steps: RotationStep[] = chosen.map((ci) => {
    const list: ValveRef[] = [];
    freeAt(candidates[ci]!.angle).forEach((free, vi) => {
      if (free && !listed.has(vi)) {
        listed.add(vi);
        list.push(valves[vi]!);
      }
    });
    const order = (a: ValveRef, b: ValveRef) =>
      a.kind === b.kind ? a.cylinder - b.cylinder : a.kind === "intake" ? -1 : 1;
    return {
      crankAngle: candidates[ci]!.angle,
      tdcCylinder: candidates[ci]!.cyl,
      pastTdc: candidates[ci]!.pastTdc,
      valves: list.sort(order),
    };
  });
  return { steps };
}
