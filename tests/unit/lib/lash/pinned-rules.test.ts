import { describe, expect, it } from "vitest";
import { driftProjection, planShims, rotationGuide, shimSeries } from "@/lib/lash";

/**
 * Rules of the core that a wrong change could break without another test noticing. Each case is
 * worked by hand below from the shim rule (predicted = installed + measured - new shim; docs/trade.md
 * "Choosing a shim", common practice) with invented valves; the working is in the comments.
 */
const spec = { min: 0.2, max: 0.3 }; // target 0.25, the middle of the band
const sizes = shimSeries(2.3, 3.3, 0.05);
const row = (p: ReturnType<typeof planShims>, id: string) => p.assignments.find((a) => a.valveId === id)!;

describe("the tight-edge margin", () => {
  it("leaves a valve that is in its band, but inside the margin, on its own shim", () => {
    // 2.60 shim, 0.21 measured: 0.21 lies in 0.20-0.30, so nothing changes, although a margin of
    // 0.02 would not let a NEW shim aim below 0.22. The margin steers new shims, not which valves change.
    const p = planShims({ valves: [{ id: "I1.1", installed: 2.6, measured: 0.21, spec }], sizes, tightMargin: 0.02 });
    expect(row(p, "I1.1")).toMatchObject({ size: 2.6, predicted: 0.21, source: { kind: "keep" }, inSpec: true });
    expect(p.buy).toEqual([]);
  });

  it("moves a target that falls inside the margin up to the margin's edge", () => {
    // band 0.20-0.30 with the engine's target 0.21 and a margin of 0.03: what is left is 0.23-0.30,
    // and the target moves up to 0.23. Gap 2.60 + 0.40 = 3.00, so the ideal shim is
    // 3.00 - 0.23 = 2.77 (with the target left at 0.21 it would read 2.79). Of the 0.05 series,
    // 2.75 gives 0.25 (0.02 from 0.23) and 2.70 gives 0.30; 2.80 gives 0.20, inside the margin.
    const p = planShims({
      valves: [{ id: "E1.1", installed: 2.6, measured: 0.4, spec: { ...spec, target: 0.21 } }],
      sizes,
      tightMargin: 0.03,
    });
    expect(row(p, "E1.1")).toMatchObject({ ideal: 2.77, size: 2.75, predicted: 0.25, source: { kind: "buy" } });
  });
});

describe("a tie between two free shims goes to the thinner one (the looser valve)", () => {
  it("between two tray shims", () => {
    // gap 2.60 + 0.40 = 3.00: the tray's 2.70 gives 0.30 and its 2.80 gives 0.20, both 0.05 from
    // 0.25. Clearance closes in service (common practice), so the thinner 2.70 is taken.
    const p = planShims({
      valves: [{ id: "E1.1", installed: 2.6, measured: 0.4, spec }],
      sizes,
      tray: [
        { size: 2.8, count: 1 },
        { size: 2.7, count: 1 },
      ],
    });
    expect(row(p, "E1.1")).toMatchObject({ size: 2.7, predicted: 0.3, source: { kind: "tray" } });
    expect(p.buy).toEqual([]);
  });

  it("between a shim out of another valve and one from the tray", () => {
    // E1.1: gap 3.00 as above. I1.1: 2.70 + 0.05 = gap 2.75, needs 2.50 for 0.25, which the tray
    // has; its 2.70 comes out and would give E1.1 0.30; the tray's 2.80 would give E1.1 0.20.
    // Nothing is bought either way and both are 0.05 from the target: the thinner 2.70 wins.
    const valves = [
      { id: "E1.1", installed: 2.6, measured: 0.4, spec },
      { id: "I1.1", installed: 2.7, measured: 0.05, spec },
    ];
    const p = planShims({
      valves,
      sizes,
      tray: [
        { size: 2.5, count: 1 },
        { size: 2.8, count: 1 },
      ],
    });
    expect(row(p, "I1.1")).toMatchObject({ size: 2.5, predicted: 0.25, source: { kind: "tray" } });
    expect(row(p, "E1.1")).toMatchObject({ size: 2.7, predicted: 0.3, source: { kind: "valve", valveId: "I1.1" } });
    // E1.1's own 2.60 has no taker (I1.1 would get 0.15): back to the tray
    expect(p.toTray).toEqual([{ size: 2.6, count: 1 }]);
  });
});

describe("the rotation guide does not depend on where a firing order is written from", () => {
  it("3-4-2-1 gives the same stops as 1-3-4-2, with 0 degrees at cylinder 1", () => {
    // 3-4-2-1 is the same cycle as 1-3-4-2 read from cylinder 3 (common practice: an order is a
    // cycle). Even fire at 180 degrees: 1 at 0, 3 at 180, 4 at 360, 2 at 540 in both writings.
    const a = rotationGuide({ firingOrder: [1, 3, 4, 2] });
    const b = rotationGuide({ firingOrder: [3, 4, 2, 1] });
    expect(b).toEqual(a);
    expect(b.steps[0]).toMatchObject({ crankAngle: 0, tdcCylinder: 1 });
  });
});

describe("drift", () => {
  it("a valve whose gap stays put projects no limit at all (not an infinitely distant one)", () => {
    // gap 2.60 + 0.25 = 2.85 at 10,000, 2.65 + 0.20 = 2.85 at 20,000 (shim changed), 2.85 at 30,000:
    // the least-squares slope is exactly 0, so the line never meets the lower limit.
    const r = driftProjection({
      points: [
        { odometer: 10_000, installed: 2.6, measured: 0.25 },
        { odometer: 20_000, installed: 2.65, measured: 0.2 },
        { odometer: 30_000, installed: 2.65, measured: 0.2 },
      ],
      lowerLimit: 0.2,
    });
    expect(r.slopePerThousandKm).toBe(0);
    expect(r.limitAtOdometer).toBeNull();
  });
});
