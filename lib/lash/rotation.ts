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
  /** the cylinder that is at firing TDC (top of its compression stroke) at this position */
  tdcCylinder: number;
  valves: ValveRef[];
}

/**
 * Default timing for a street engine in crank degrees: IVO 20 BTDC, IVC 50 ABDC, EVO 50 BBDC,
 * EVC 20 ATDC (shared/TRADE.md: typical street petrol engine; common practice).
 */
export const DEFAULT_TIMING: ValveTiming = { ivo: 20, ivc: 50, evo: 50, evc: 20 };
/** Degrees added to both ends of each lift window for the cam's opening and closing ramps. */
export const DEFAULT_MARGIN = 20;

const mod720 = (a: number) => ((a % 720) + 720) % 720;

/**
 * Is a valve on its base circle at this phase? Phase is degrees after the cylinder's firing TDC. The
 * intake is lifted from 360-IVO to 540+IVC and the exhaust from 180-EVO to 360+EVC (shared/TRADE.md,
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
 * The crank-rotation guide (DESIGN.md section 4.4): the fewest stops, among the cylinders' firing
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

  const candidates = [...tdc.entries()].map(([cyl, angle]) => ({ cyl, angle })).sort((a, b) => a.angle - b.angle);
  const valves: ValveRef[] = [];
  for (let c = 1; c <= n; c++) valves.push({ cylinder: c, kind: "intake" }, { cylinder: c, kind: "exhaust" });
  const checkable = candidates.map((cand) =>
    valves.map((v) => onBaseCircle(v.kind, cand.angle - tdc.get(v.cylinder)!, timing, margin)),
  );
  const all = (1 << valves.length) - 1;
  const masks = checkable.map((row) => row.reduce((m, ok, i) => (ok ? m | (1 << i) : m), 0));

  // Subsets of candidates by size, and within a size in rotation order (lexicographic indices).
  let chosen: number[] | undefined;
  const pick = (start: number, left: number, acc: number[], mask: number): boolean => {
    if (left === 0) {
      if (mask === all) {
        chosen = [...acc];
        return true;
      }
      return false;
    }
    for (let i = start; i <= candidates.length - left; i++) {
      acc.push(i);
      if (pick(i + 1, left - 1, acc, mask | masks[i]!)) return true;
      acc.pop();
    }
    return false;
  };
  for (let size = 1; size <= candidates.length && !chosen; size++) pick(0, size, [], 0);
  if (!chosen)
    throw new LashInputError(
      "With this valve timing and margin some valve is never on its base circle at a firing TDC: check the timing or lower the margin",
      [{ path: "margin", message: "no crank position frees every valve" }],
    );

  const listed = new Set<number>();
  const steps: RotationStep[] = chosen.map((ci) => {
    const list: ValveRef[] = [];
    valves.forEach((v, vi) => {
      if (checkable[ci]![vi] && !listed.has(vi)) {
        listed.add(vi);
        list.push(v);
      }
    });
    const order = (a: ValveRef, b: ValveRef) => (a.kind === b.kind ? a.cylinder - b.cylinder : a.kind === "intake" ? -1 : 1);
    return { crankAngle: candidates[ci]!.angle, tdcCylinder: candidates[ci]!.cyl, valves: list.sort(order) };
  });
  return { steps };
}
