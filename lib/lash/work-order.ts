import type { Assignment } from "./plan";

export type Place =
  | { kind: "valve"; valveId: string }
  | { kind: "tray" }
  | { kind: "shop" }
  | { kind: "club"; ownerId: string }
  | { kind: "aside" };

export interface ShimMove {
  /** the shim's size (mm) */
  size: number;
  from: Place;
  to: Place;
}

/**
 * The swap list in working order. A shim passed from valve A to valve B forms chains (and, when
 * two valves trade, cycles). Working each chain from its end means only one shim is ever loose in
 * the hand: lift the last valve's shim to the tray, move the one before into its place, and so on;
 * the first valve of the chain is fitted from the tray or a bought shim. A cycle starts by setting
 * one shim aside. Valves that keep their shim do not appear.
 */
export function workOrder(assignments: Assignment[], installed: Record<string, number>): ShimMove[] {
  const changing = assignments.filter((a) => a.source.kind !== "keep");
  const giverOf = new Map<string, Assignment>(); // receiving valve -> its assignment
  const receiverOf = new Map<string, string>(); // giving valve -> receiving valve
  for (const a of changing) {
    giverOf.set(a.valveId, a);
    if (a.source.kind === "valve") receiverOf.set(a.source.valveId, a.valveId);
  }
  const moves: ShimMove[] = [];
  const done = new Set<string>();
  const fitFromStart = (a: Assignment) => {
    const from: Place =
      a.source.kind === "tray"
        ? { kind: "tray" }
        : a.source.kind === "club"
          ? { kind: "club", ownerId: a.source.ownerId }
          : { kind: "shop" };
    moves.push({ size: a.size, from, to: { kind: "valve", valveId: a.valveId } });
  };
  // walk back from a valve whose own shim was just lifted, fitting each giver's shim in turn
  const walkBack = (valveId: string, stopAt?: string) => {
    let cur = valveId;
    for (;;) {
      done.add(cur);
      const a = giverOf.get(cur)!;
      if (a.source.kind !== "valve") return fitFromStart(a);
      const giver = a.source.valveId;
      if (giver === stopAt) {
        moves.push({ size: a.size, from: { kind: "aside" }, to: { kind: "valve", valveId: cur } });
        return;
      }
      moves.push({ size: a.size, from: { kind: "valve", valveId: giver }, to: { kind: "valve", valveId: cur } });
      cur = giver;
    }
  };
  // chains: start at valves whose old shim nobody takes
  for (const a of changing) {
    if (done.has(a.valveId) || receiverOf.has(a.valveId)) continue;
    moves.push({ size: installed[a.valveId]!, from: { kind: "valve", valveId: a.valveId }, to: { kind: "tray" } });
    walkBack(a.valveId);
  }
  // what is left are cycles
  for (const a of changing) {
    if (done.has(a.valveId)) continue;
    moves.push({ size: installed[a.valveId]!, from: { kind: "valve", valveId: a.valveId }, to: { kind: "aside" } });
    walkBack(a.valveId, a.valveId);
  }
  return moves;
}
