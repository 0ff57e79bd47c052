import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { planShims, workOrder, type Assignment } from "@/lib/lash";
import { series, valvesOf, randomValves } from "../../support/plan-fixture";

/** Play the moves on a model engine: every valve must end with its planned shim, and no shim may be used twice. */
function play(assignments: Assignment[], installed: Record<string, number>, moves: ReturnType<typeof workOrder>) {
  const bucket = new Map(Object.entries(installed).map(([k, v]) => [k, v as number | null]));
  const hand: number[] = [];
  for (const m of moves) {
    if (m.from.kind === "valve") {
      expect(bucket.get(m.from.valveId)).toBe(m.size);
      bucket.set(m.from.valveId, null);
    }
    if (m.from.kind === "aside") expect(hand.splice(hand.indexOf(m.size), 1)).toEqual([m.size]);
    if (m.to.kind === "valve") {
      expect(bucket.get(m.to.valveId)).toBeNull(); // never fit onto a shim still in place
      bucket.set(m.to.valveId, m.size);
    }
    if (m.to.kind === "aside") hand.push(m.size);
  }
  for (const a of assignments) expect(bucket.get(a.valveId)).toBe(a.size);
  expect(hand).toEqual([]);
}

describe("workOrder", () => {
  it("a straight trade between two valves: one set aside, then two moves", () => {
    const valves = valvesOf([
      ["I1.1", 2.75, 0.1],
      ["E2.1", 2.6, 0.4],
    ]);
    const plan = planShims({ valves, sizes: series });
    const moves = workOrder(plan.assignments, { "I1.1": 2.75, "E2.1": 2.6 });
    expect(moves).toEqual([
      { size: 2.75, from: { kind: "valve", valveId: "I1.1" }, to: { kind: "aside" } },
      { size: 2.6, from: { kind: "valve", valveId: "E2.1" }, to: { kind: "valve", valveId: "I1.1" } },
      { size: 2.75, from: { kind: "aside" }, to: { kind: "valve", valveId: "E2.1" } },
    ]);
  });

  it("property: playing the moves on random plans leaves every valve with its planned shim", () => {
    fc.assert(
      fc.property(randomValves(16, { min: 20, max: 600 }), (valves) => {
        const plan = planShims({ valves, sizes: series, tray: [{ size: 2.6, count: 2 }] });
        const installed = Object.fromEntries(valves.map((v) => [v.id, v.installed]));
        play(plan.assignments, installed, workOrder(plan.assignments, installed));
      }),
      { numRuns: 300, seed: 5 },
    );
  });
});
