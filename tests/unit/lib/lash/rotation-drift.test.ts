import { describe, expect, it } from "vitest";
import { linearRegression } from "simple-statistics";
import { driftProjection, fastClosingValves, LashInputError, onBaseCircle, rotationGuide, DEFAULT_TIMING } from "@/lib/lash";

const names = (vs: { cylinder: number; kind: string }[], kind: string) => vs.filter((v) => v.kind === kind).map((v) => v.cylinder);

describe("rotationGuide", () => {
  it("inline four 1-3-4-2: TDC #1 compression checks intake 1,2 exhaust 1,3; one turn later the rest", () => {
    // common practice; derived (shared/TRADE.md)
    const { steps } = rotationGuide({ firingOrder: [1, 3, 4, 2] });
    expect(steps.map((s) => [s.crankAngle, s.tdcCylinder])).toEqual([[0, 1], [360, 4]]);
    expect(names(steps[0]!.valves, "intake")).toEqual([1, 2]);
    expect(names(steps[0]!.valves, "exhaust")).toEqual([1, 3]);
    expect(names(steps[1]!.valves, "intake")).toEqual([3, 4]);
    expect(names(steps[1]!.valves, "exhaust")).toEqual([2, 4]);
  });

  it("inline six 1-5-3-6-2-4: TDC #1 checks intake 1,2,4 exhaust 1,3,5; TDC #6 the rest", () => {
    // common practice, from memory (the two-position method for a straight six)
    const { steps } = rotationGuide({ firingOrder: [1, 5, 3, 6, 2, 4] });
    expect(steps.map((s) => s.tdcCylinder)).toEqual([1, 6]);
    expect(names(steps[0]!.valves, "intake")).toEqual([1, 2, 4]);
    expect(names(steps[0]!.valves, "exhaust")).toEqual([1, 3, 5]);
    expect(names(steps[1]!.valves, "intake")).toEqual([3, 5, 6]);
    expect(names(steps[1]!.valves, "exhaust")).toEqual([2, 4, 6]);
  });

  it("a single checks both valves at its firing TDC", () => {
    const { steps } = rotationGuide({ firingOrder: [1] });
    expect(steps).toEqual([{ crankAngle: 0, tdcCylinder: 1, valves: [{ cylinder: 1, kind: "intake" }, { cylinder: 1, kind: "exhaust" }] }]);
  });

  it("90 degree V-twin firing at 0 and 270: two stops, the rear intake only at its own TDC", () => {
    // derived (shared/TRADE.md): a common-crankpin 90 degree twin fires 270/450
    const { steps } = rotationGuide({ firingOrder: [1, 2], firingAngles: [0, 270] });
    expect(steps.map((s) => s.crankAngle)).toEqual([0, 270]);
    expect(steps[0]!.valves).toEqual([{ cylinder: 1, kind: "intake" }, { cylinder: 1, kind: "exhaust" }, { cylinder: 2, kind: "exhaust" }]);
    expect(steps[1]!.valves).toEqual([{ cylinder: 2, kind: "intake" }]);
  });

  it("its running mate, 360 degrees away, is in overlap: neither of its valves can be checked", () => {
    // common practice (shared/TRADE.md)
    expect(onBaseCircle("intake", 360, DEFAULT_TIMING, 20)).toBe(false);
    expect(onBaseCircle("exhaust", 360, DEFAULT_TIMING, 20)).toBe(false);
    expect(onBaseCircle("intake", 0, DEFAULT_TIMING, 20)).toBe(true);
    expect(onBaseCircle("exhaust", 0, DEFAULT_TIMING, 20)).toBe(true);
  });

  it("covers every valve exactly once for even-fire engines of 1 to 8 cylinders", () => {
    const orders: number[][] = [[1], [1, 2], [1, 2, 3], [1, 3, 4, 2], [1, 2, 4, 5, 3], [1, 5, 3, 6, 2, 4], [1, 2, 4, 7, 6, 5, 3], [1, 8, 4, 3, 6, 5, 7, 2]];
    for (const firingOrder of orders) {
      const { steps } = rotationGuide({ firingOrder });
      const listed = steps.flatMap((s) => s.valves.map((v) => `${v.kind}${v.cylinder}`));
      expect(new Set(listed).size).toBe(listed.length);
      expect(listed).toHaveLength(firingOrder.length * 2);
      expect(steps[0]!.crankAngle).toBe(0);
    }
  });

  it("rejects a firing order that misses a cylinder, and timing that frees no valve", () => {
    expect(() => rotationGuide({ firingOrder: [1, 3, 3, 2] })).toThrow(/each cylinder 1 to 4 once/);
    expect(() => rotationGuide({ firingOrder: [1, 2], firingAngles: [0] })).toThrow(LashInputError);
    expect(() => rotationGuide({ firingOrder: [1], timing: { ivo: 90, ivc: 150, evo: 150, evc: 90 }, margin: 90 })).toThrow(/never on its base circle/);
  });
});

describe("driftProjection", () => {
  // Invented readings for the test (not trade data): a valve closing about 0.01 mm per 1,000 km.
  const points = [
    { odometer: 12_000, installed: 2.6, measured: 0.26 },
    { odometer: 24_500, installed: 2.6, measured: 0.24 },
    { odometer: 36_000, installed: 2.55, measured: 0.27 }, // shim changed: the gap does not jump
    { odometer: 48_200, installed: 2.55, measured: 0.25 },
  ];

  it("fits the same least-squares line as simple-statistics", () => {
    // reference library: simple-statistics linearRegression on (odometer, installed + measured)
    const ref = linearRegression(points.map((p) => [p.odometer, p.installed + p.measured]));
    const d = driftProjection({ points, lowerLimit: 0.2 });
    expect(d.slopePerThousandKm).toBeCloseTo(ref.m * 1000, 12);
    // gap = b + m x reaches 0.20 + 2.55 where x = (2.75 - b) / m
    expect(d.limitAtOdometer).toBeCloseTo((2.75 - ref.b) / ref.m, 3);
  });

  it("projects with a given current shim, and says null when not closing or too few points", () => {
    const thinner = driftProjection({ points, lowerLimit: 0.2, currentShim: 2.5 });
    const base = driftProjection({ points, lowerLimit: 0.2 });
    expect(thinner.limitAtOdometer!).toBeGreaterThan(base.limitAtOdometer!);
    const opening = driftProjection({ points: [{ odometer: 0, installed: 2.6, measured: 0.2 }, { odometer: 10_000, installed: 2.6, measured: 0.22 }], lowerLimit: 0.15 });
    expect(opening.slopePerThousandKm).toBeCloseTo(0.002, 12);
    expect(opening.limitAtOdometer).toBeNull();
    expect(driftProjection({ points: points.slice(0, 1), lowerLimit: 0.2 })).toEqual({ slopePerThousandKm: null, limitAtOdometer: null });
  });

  it("rejects negative clearances and odometers", () => {
    expect(() => driftProjection({ points: [{ odometer: -5, installed: 2.6, measured: 0.2 }], lowerLimit: 0.2 })).toThrow(LashInputError);
    expect(() => driftProjection({ points: [{ odometer: 5, installed: 2.6, measured: -0.2 }], lowerLimit: 0.2 })).toThrow(/negative/);
  });

  it("flags a valve closing much faster than its neighbours", () => {
    const flagged = fastClosingValves([
      { valveId: "I1", slopePerThousandKm: -0.002 },
      { valveId: "I2", slopePerThousandKm: -0.003 },
      { valveId: "E1", slopePerThousandKm: -0.012 },
      { valveId: "E2", slopePerThousandKm: -0.004 },
      { valveId: "E3", slopePerThousandKm: null },
    ]);
    expect(flagged).toEqual(["E1"]);
    expect(fastClosingValves([{ valveId: "a", slopePerThousandKm: -0.004 }, { valveId: "b", slopePerThousandKm: -0.005 }, { valveId: "c", slopePerThousandKm: -0.0045 }])).toEqual([]);
  });
});
