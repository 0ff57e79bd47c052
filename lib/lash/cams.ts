import { parseOrThrow } from "./errors";
import { camsOutInputSchema, type ShimPosition } from "./schemas";
import { parseValveName } from "./valves";
import type { ValveKind } from "./rotation";

/** One camshaft that must come out, and the cylinders whose valves under it change. */
export interface CamOut {
  cam: ValveKind;
  cylinders: number[];
}

/**
 * The camshafts to take out before a fit (common practice; from memory). With the shims under the
 * buckets, a shim is reached only with the camshaft over its valve out: the intake cam for an intake
 * valve, the exhaust cam for an exhaust valve. With the shims over the buckets every cam stays in.
 * The cylinders are named so that on an engine with more than one head (a V) the mechanic knows
 * which head's cam; on an inline engine one cam runs over them all. Intake first, as the engine's
 * valves are named; an empty answer means no cam comes out.
 */
export function camsOut(input: { shimPosition: ShimPosition; valves: string[] }): CamOut[] {
  const { shimPosition, valves } = parseOrThrow(camsOutInputSchema, input, "cams-out input");
  if (shimPosition === "over") return [];
  const by = new Map<ValveKind, Set<number>>();
  for (const id of valves) {
    const v = parseValveName(id)!;
    if (!by.has(v.kind)) by.set(v.kind, new Set());
    by.get(v.kind)!.add(v.cylinder);
  }
  return (["intake", "exhaust"] as const)
    .filter((k) => by.has(k))
    .map((cam) => ({ cam, cylinders: [...by.get(cam)!].sort((a, b) => a - b) }));
}

/** The plan's line for the cams: "Cams out: intake (cylinders 1, 3), exhaust (cylinder 2)." */
export function camsOutWords(cams: CamOut[]): string {
  if (cams.length === 0) return "Cams out: none (no shim changes).";
  const one = (c: CamOut) => `${c.cam} (cylinder${c.cylinders.length === 1 ? "" : "s"} ${c.cylinders.join(", ")})`;
  return `Cams out: ${cams.map(one).join(", ")}.`;
}
