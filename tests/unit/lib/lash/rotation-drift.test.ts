import { describe, expect, it } from "vitest";
import { linearRegression } from "simple-statistics";
import {
  driftProjection,
  fastClosingValves,
  LashInputError,
  onBaseCircle,
  rotationGuide,
  DEFAULT_TIMING,
} from "@/lib/lash";

const names = (vs: { cylinder: number; kind: string }[], kind: string) =>
  vs.filter((v) => v.kind === kind).map((v) => v.cylinder);

describe("rotationGuide", () => {
  it("inline four 1-3-4-2: TDC #1 compression checks intake 1,2 exhaust 1,3; one turn later the rest", () => {
    // common practice; derived (docs/trade.md)
    const { steps } = rotationGuide({ firingOrder: [1, 3, 4, 2] });
    expect(steps.map((s) => [s.crankAngle, s.tdcCylinder])).toEqual([
      [0, 1],
      [360, 4],
    ]);
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
    expect(steps).toEqual([
      {
        crankAngle: 0,
        tdcCylinder: 1,
        pastTdc: 0,
        valves: [
          { cylinder: 1, kind: "intake" },
          { cylinder: 1, kind: "exhaust" },
        ],
      },
    ]);
  });

  it("90 degree V-twin firing at 0 and 270: two stops, the rear intake only at its own TDC", () => {
    // derived (docs/trade.md): a common-crankpin 90 degree twin fires 270/450. Working, with the
    // default timing (IVO 20, IVC 50, EVO 50, EVC 20) and the 20 degree ramp margin, in degrees after
    // each cylinder's own firing TDC: intake lifted 360-20-20 = 320 to 540+50+20 = 610, exhaust lifted
    // 180-50-20 = 110 to 360+20+20 = 400; free everywhere else.
    // At 0: cylinder 1 is at 0 (intake free, exhaust free); cylinder 2 fires at 270, so it is at
    // 0-270 = -270 = 450 (intake lifted, 320 < 450 < 610; exhaust free, 450 > 400): I1, E1, E2.
    // At 270: cylinder 2 at 0 (both free), cylinder 1 at 270 (intake free, exhaust lifted, 110 < 270
    // < 400): I2 is the only valve not yet listed. No single stop frees all four.
    const { steps } = rotationGuide({ firingOrder: [1, 2], firingAngles: [0, 270] });
    expect(steps.map((s) => s.crankAngle)).toEqual([0, 270]);
    expect(steps[0]!.valves).toEqual([
      { cylinder: 1, kind: "intake" },
      { cylinder: 1, kind: "exhaust" },
      { cylinder: 2, kind: "exhaust" },
    ]);
    expect(steps[1]!.valves).toEqual([{ cylinder: 2, kind: "intake" }]);
  });

  it("its running mate, 360 degrees away, is in overlap: neither of its valves can be checked", () => {
    // common practice (docs/trade.md)
    expect(onBaseCircle("intake", 360, DEFAULT_TIMING, 20)).toBe(false);
    expect(onBaseCircle("exhaust", 360, DEFAULT_TIMING, 20)).toBe(false);
    expect(onBaseCircle("intake", 0, DEFAULT_TIMING, 20)).toBe(true);
    expect(onBaseCircle("exhaust", 0, DEFAULT_TIMING, 20)).toBe(true);
  });

  it("covers every valve exactly once for even-fire engines of 1 to 8 cylinders", () => {
    const orders: number[][] = [
      [1],
      [1, 2],
      [1, 2, 3],
      [1, 3, 4, 2],
      [1, 2, 4, 5, 3],
      [1, 5, 3, 6, 2, 4],
      [1, 2, 4, 7, 6, 5, 3],
      [1, 8, 4, 3, 6, 5, 7, 2],
    ];
    for (const firingOrder of orders) {
      const { steps } = rotationGuide({ firingOrder });
      const listed = steps.flatMap((s) => s.valves.map((v) => `${v.kind}${v.cylinder}`));
      expect(new Set(listed).size).toBe(listed.length);
      expect(listed).toHaveLength(firingOrder.length * 2);
      expect(steps[0]!.crankAngle).toBe(0);
    }
  });

  it("rejects a firing order that misses a cylinder, and firing angles that do not match it", () => {
    expect(() => rotationGuide({ firingOrder: [1, 3, 3, 2] })).toThrow(/each cylinder 1 to 4 once/);
    expect(() => rotationGuide({ firingOrder: [1, 2], firingAngles: [0] })).toThrow(LashInputError);
  });

  it("offers stops between the TDC marks when long timing leaves a valve lifted at every TDC", () => {
    // derived (docs/trade.md windows): with IVO 90, IVC 150 and a 90 degree margin the intake is
    // lifted from 180 to 780 (= 60), so free only strictly between 60 and 180 degrees past firing
    // TDC; the exhaust (EVO 150, EVC 90) from -60 to 540, so free between 540 and 660. On a 30
    // degree grid: 90 and 570.
    const { steps } = rotationGuide({ firingOrder: [1], timing: { ivo: 90, ivc: 150, evo: 150, evc: 90 }, margin: 90 });
    expect(steps.map((s) => [s.tdcCylinder, s.pastTdc, s.valves.map((v) => v.kind)])).toEqual([
      [1, 90, ["intake"]],
      [1, 570, ["exhaust"]],
    ]);
  });

  it("works for every engine the engine schema accepts: 1 to 16 cylinders, timing and margin at their bounds", () => {
    // the schema's bounds (lib/lash/schemas.ts): timing -90 to 120/180 degrees, margin 0 to 90
    const corners = [
      { ivo: -90, ivc: -90, evo: -90, evc: -90 },
      { ivo: 120, ivc: 180, evo: 180, evc: 120 },
      { ivo: 120, ivc: -90, evo: -90, evc: 120 },
      { ivo: -90, ivc: 180, evo: 180, evc: -90 },
    ];
    for (let n = 1; n <= 16; n++) {
      const firingOrder = Array.from({ length: n }, (_, i) => i + 1);
      for (const timing of [undefined, ...corners])
        for (const margin of [0, 20, 90]) {
          const { steps } = rotationGuide({ firingOrder, timing, margin });
          const listed = steps.flatMap((s) => s.valves.map((v) => `${v.kind}${v.cylinder}`));
          expect(new Set(listed).size).toBe(n * 2);
          expect(listed).toHaveLength(n * 2);
          // each listed valve is on its base circle at its stop
          for (const s of steps)
            for (const v of s.valves)
              expect(
                onBaseCircle(v.kind, s.crankAngle - ((v.cylinder - 1) * 720) / n, timing ?? DEFAULT_TIMING, margin),
              ).toBe(true);
        }
    }
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
    const opening = driftProjection({
      points: [
        { odometer: 0, installed: 2.6, measured: 0.2 },
        { odometer: 10_000, installed: 2.6, measured: 0.22 },
      ],
      lowerLimit: 0.15,
    });
    expect(opening.slopePerThousandKm).toBeCloseTo(0.002, 12);
    expect(opening.limitAtOdometer).toBeNull();
    expect(driftProjection({ points: points.slice(0, 1), lowerLimit: 0.2 })).toMatchObject({
      slopePerThousandKm: null,
      limitAtOdometer: null,
      verdict: "few-checks",
    });
  });

  it("rejects negative clearances and odometers", () => {
    expect(() =>
      driftProjection({ points: [{ odometer: -5, installed: 2.6, measured: 0.2 }], lowerLimit: 0.2 }),
    ).toThrow(LashInputError);
    expect(() =>
      driftProjection({ points: [{ odometer: 5, installed: 2.6, measured: -0.2 }], lowerLimit: 0.2 }),
    ).toThrow(/negative/);
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
    expect(
      fastClosingValves([
        { valveId: "a", slopePerThousandKm: -0.004 },
        { valveId: "b", slopePerThousandKm: -0.005 },
        { valveId: "c", slopePerThousandKm: -0.0045 },
      ]),
    ).toEqual([]);
  });
});
