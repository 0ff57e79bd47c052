import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { bandSide, compareLengths, sameLength, METRIC_BLADES_MM } from "@/lib/lash";
import { measuredState } from "@/lib/check/derive";
import { noGoOf } from "@/lib/check/blades";
import { readingProblems } from "@/lib/schemas/records";
import { poolForEngine, trayForEngine } from "@/lib/check/pool";

// Hand-worked cases: lengths are decided in whole nanometres (toNm rounds to the nearest one; 1 mm is
// 10^6 nm), so a clearance 0.6 nm past an edge is past it, 0.4 nm past it is on it, and sums of
// decimals that a double gets wrong (0.1 + 0.2 = 0.30000000000000004: IEEE 754 binary64 rounding, as
// ECMAScript specifies for Number) are the decimals they mean. The
// planner decides the same way, so a card never says "tight" of a valve the plan leaves in band.
// an illustrative band in mm for the arithmetic, not a particular engine's figure
const BAND = { min: 0.1, max: 0.2 };

describe("in band, decided in nanometres by the core", () => {
  it("counts both edges of the band as in it", () => {
    expect(bandSide(0.1, BAND)).toBe("in-band");
    expect(bandSide(0.2, BAND)).toBe("in-band");
    expect(measuredState(0.1, BAND, 0)).toBe("in-band");
    expect(measuredState(0.2, BAND, 1)).toBe("verified");
  });

  it("reads a sum a double gets wrong as the decimal it is: 0.1 + 0.2 is the 0.30 edge, not past it", () => {
    expect(0.1 + 0.2 > 0.3).toBe(true); // the double
    expect(bandSide(0.1 + 0.2, { min: 0.2, max: 0.3 })).toBe("in-band");
    expect(bandSide(0.3, { min: 0.1 + 0.2, max: 0.4 })).toBe("in-band");
    expect(sameLength(0.1 + 0.2, 0.3)).toBe(true);
    expect(compareLengths(0.1 + 0.2, 0.3)).toBe(0);
  });

  it("rounds a clearance to the nanometre before it is compared, as the planner does", () => {
    // 0.2000004 mm is 200,000.4 nm: the 200,000 nm edge (a float compare with 1e-9 mm called it loose)
    expect(measuredState(0.2000004, BAND, 0)).toBe("in-band");
    expect(measuredState(0.0999996, BAND, 0)).toBe("in-band");
    // 0.6 nm past is 1 nm past
    expect(measuredState(0.2000006, BAND, 0)).toBe("loose");
    expect(measuredState(0.0999994, BAND, 0)).toBe("tight");
  });

  it("takes the next thicker blade as the no-go, to the nanometre", () => {
    expect(noGoOf(METRIC_BLADES_MM, 0.1)).toBe(0.13);
    // a blade within half a nanometre of the go blade is that blade, not the next one
    expect(noGoOf([0.1, 0.1000004, 0.13], 0.1)).toBe(0.13);
    expect(noGoOf([0.1 + 0.2, 0.35], 0.3)).toBe(0.35);
  });

  it("holds a shim to the engine's range with 0.1 mm of slack, edges included, to the nanometre", () => {
    const engine = { cylinders: 1, intakePerCylinder: 1, exhaustPerCylinder: 1, shimSizes: [2.0, 2.05, 2.1] };
    const at = (s: number) => readingProblems(engine, [{ valve: "I1.1", installedStamp: s } as never]);
    expect(at(1.9)).toEqual({});
    expect(at(2.2)).toEqual({});
    expect(at(2.2000004)).toEqual({});
    expect(Object.keys(at(2.2000006))).toEqual(["readings.0.installedStamp"]);
    expect(Object.keys(at(1.8999994))).toEqual(["readings.0.installedStamp"]);
  });

  it("agrees with exact integer arithmetic for every stored length (decimal(8,5) millimetres)", () => {
    const len = fc.integer({ min: 0, max: 999_99999 });
    fc.assert(
      fc.property(len, len, len, (c, a, b) => {
        const [lo, hi] = a <= b ? [a, b] : [b, a];
        const want = c < lo ? "tight" : c > hi ? "loose" : "in-band";
        expect(bandSide(c / 1e5, { min: lo / 1e5, max: hi / 1e5 })).toBe(want);
      }),
    );
  });
});

describe("a shim system's diameter, matched in nanometres", () => {
  const offer = (shimDiameter: number) => ({
    id: "o",
    size: 2.5,
    count: 1,
    ownerId: "a",
    ownerName: "A",
    shimDiameter,
  });
  const fits = (engine: number, d: number) =>
    trayForEngine({ shimDiameter: engine }, [{ ...offer(d) }]).usable.length === 1;

  it("takes diameters less than 0.005 mm apart as one system, on either side", () => {
    expect(fits(7.48, 7.484)).toBe(true);
    expect(fits(7.48, 7.476)).toBe(true);
    expect(poolForEngine({ shimDiameter: 7.48 }, [offer(7.484)], "me").pool).toHaveLength(1);
  });

  it("takes diameters 0.005 mm apart as two systems, above as below (floats said 7.485 fits 7.48, 7.475 not)", () => {
    expect(fits(7.48, 7.485)).toBe(false);
    expect(fits(7.48, 7.475)).toBe(false);
    expect(poolForEngine({ shimDiameter: 7.48 }, [offer(7.485)], "me").wrongSystem).toHaveLength(1);
  });
});
