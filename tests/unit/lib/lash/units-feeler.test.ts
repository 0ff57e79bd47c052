import { describe, expect, it } from "vitest";
import { unit } from "mathjs";
import fc from "fast-check";
import {
  clearanceFromFeelers,
  formatLength,
  inchesToMm,
  LashInputError,
  mmToInches,
  roundForDisplay,
  shimSeries,
} from "@/lib/lash";

describe("inch and millimetre", () => {
  it("uses 1 in = 25.4 mm exactly", () => {
    // source: International Yard and Pound Agreement, 1959; NIST Handbook 44, Appendix C
    expect(inchesToMm(1)).toBe(25.4);
    // derived from the exact factor (docs/trade.md): 0.003 in = 0.0762 mm; 0.25 mm = 0.009843 in
    expect(inchesToMm(0.003)).toBe(0.0762);
    expect(roundForDisplay(0.25, "in")).toBe(0.0098);
    expect(mmToInches(0.25)).toBeCloseTo(0.009843, 6);
  });

  it("agrees with the mathjs unit library on feeler sizes from 0.001 to 0.040 in", () => {
    // reference library: mathjs unit conversion (its inch is defined as 0.0254 m)
    for (let thou = 1; thou <= 40; thou++) {
      const inches = thou / 1000;
      expect(inchesToMm(inches)).toBeCloseTo(unit(inches, "inch").toNumber("mm"), 9);
      expect(mmToInches(inchesToMm(inches))).toBeCloseTo(inches, 12);
    }
  });

  it("round-trips any length in 0.0001 in steps without drift", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 5000 }), (tenThou) => {
        const inches = tenThou / 10_000;
        expect(roundForDisplay(inchesToMm(inches), "in")).toBe(inches);
      }),
    );
  });

  it("formats with the unit and the display rounding of the computation core (README), as given", () => {
    expect(formatLength(0.27, "mm")).toBe("0.27 mm");
    expect(formatLength(2.537, "mm", true)).toBe("2.537 mm");
    expect(formatLength(0.2794, "in")).toBe("0.0110 in");
  });

  it("rejects nonsense with a clear error", () => {
    expect(() => inchesToMm(Number.NaN)).toThrow(RangeError);
  });
});

describe("shimSeries", () => {
  it("lists 17 sizes from 2.50 to 3.30 mm in 0.05 mm steps, exact decimals", () => {
    // common practice (docs/trade.md): 0.05 mm steps, for example 17 sizes from 2.50 to 3.30 mm
    const s = shimSeries(2.5, 3.3, 0.05);
    expect(s).toHaveLength(17);
    expect(s[0]).toBe(2.5);
    expect(s[1]).toBe(2.55);
    expect(s[16]).toBe(3.3);
    expect(s.map(String)).not.toContain("2.5499999999999998");
  });

  it("lists the 0.025 mm series 1.200 to 3.000 mm with both ends", () => {
    // common practice (docs/trade.md): 0.025 mm steps, for example 1.200 to 3.000 mm
    const s = shimSeries(1.2, 3.0, 0.025);
    expect(s).toHaveLength(73);
    expect(s[1]).toBe(1.225);
    expect(s.at(-1)).toBe(3);
  });

  it("refuses a range that is not a whole number of steps, or a reversed one", () => {
    expect(() => shimSeries(2.5, 3.31, 0.05)).toThrow(LashInputError);
    expect(() => shimSeries(3, 2.5, 0.05)).toThrow(/largest size/);
    expect(() => shimSeries(2.5, 3, 0)).toThrow(LashInputError);
  });
});

describe("clearanceFromFeelers", () => {
  it("brackets the clearance between go and no-go blades", () => {
    // common practice (docs/trade.md): 0.011 in slides, 0.012 in will not: [0.2794, 0.3048) mm
    const c = clearanceFromFeelers({ go: inchesToMm(0.011), noGo: inchesToMm(0.012) });
    expect(c).toEqual({ min: 0.2794, max: 0.3048, value: 0.2794 });
  });

  it("takes a single blade or typed value as it is", () => {
    expect(clearanceFromFeelers({ go: 0.15 })).toEqual({ min: 0.15, max: 0.15, value: 0.15 });
  });

  it("refuses a no-go blade that is not thicker, and negative blades", () => {
    expect(() => clearanceFromFeelers({ go: 0.2, noGo: 0.2 })).toThrow(/thicker than the go blade/);
    expect(() => clearanceFromFeelers({ go: 0.25, noGo: 0.2 })).toThrow(LashInputError);
    expect(() => clearanceFromFeelers({ go: -0.05 })).toThrow(/cannot be negative/);
    expect(() => clearanceFromFeelers({ go: Number.POSITIVE_INFINITY })).toThrow(LashInputError);
  });
});
