import { describe, expect, it } from "vitest";
import { planShims, shimSeries } from "@/lib/lash";

// Invented cases, worked by hand (derived from the shim rule in docs/trade.md: predicted =
// installed + measured - new shim). Band 0.20-0.30, target 0.25; a 0.05 mm series from 2.30 to 3.30.
const spec = { min: 0.2, max: 0.3 };
const sizes = shimSeries(2.3, 3.3, 0.05);
// A: 2.60 + 0.10 = gap 2.70; a 2.45 gives 0.25 (the target), the tray's 2.40 gives 0.30 (the loose edge)
// B: 2.60 + 0.40 = gap 3.00; a 2.75 gives 0.25, the tray's 2.80 gives 0.20 (the tight edge)
const valves = [
  { id: "I1.1", installed: 2.6, measured: 0.1, spec },
  { id: "E1.1", installed: 2.6, measured: 0.4, spec },
];
const tray = [
  { size: 2.4, count: 1 },
  { size: 2.8, count: 1 },
];
const pick = (p: ReturnType<typeof planShims>) =>
  p.assignments.map((a) => [a.valveId, a.size, a.source.kind, a.predicted, a.inSpec]);

describe("the plan's aim and tight-edge margin", () => {
  it("without options behaves as before: buy the fewest, reusing tray shims that land anywhere in the band", () => {
    const plain = planShims({ valves, sizes, tray });
    expect(pick(plain)).toEqual([
      ["I1.1", 2.4, "tray", 0.3, true],
      ["E1.1", 2.8, "tray", 0.2, true],
    ]);
    expect(planShims({ valves, sizes, tray, aim: "fewest-bought", tightMargin: 0 })).toEqual(plain);
  });

  it("'land nearest the target' buys the sizes that hit the target rather than reuse edge shims", () => {
    const p = planShims({ valves, sizes, tray, aim: "nearest-target" });
    expect(pick(p)).toEqual([
      ["I1.1", 2.45, "buy", 0.25, true],
      ["E1.1", 2.75, "buy", 0.25, true],
    ]);
    expect(p.buy).toEqual([
      { size: 2.45, count: 1 },
      { size: 2.75, count: 1 },
    ]);
  });

  it("a margin at the tight edge refuses a shim that would land on it, and keeps the loose-edge reuse", () => {
    const p = planShims({ valves, sizes, tray, tightMargin: 0.02 });
    expect(pick(p)).toEqual([
      ["I1.1", 2.4, "tray", 0.3, true],
      ["E1.1", 2.75, "buy", 0.25, true],
    ]);
  });

  it("refuses a margin over 0.2 mm", () => {
    expect(() => planShims({ valves, sizes, tray, tightMargin: 0.25 })).toThrow(/at most 0.2 mm/);
  });
});
