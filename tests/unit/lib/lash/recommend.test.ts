import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { LashInputError, recommendShim, shimSeries } from "@/lib/lash";

const series05 = shimSeries(2.5, 3.3, 0.05);

describe("recommendShim: the worked cases of docs/trade.md", () => {
  it("case 1: 2.75 removed, 0.12 measured, band 0.20-0.30 -> 2.60, predicted 0.27", () => {
    // common practice (docs/trade.md, worked case 1)
    const r = recommendShim({ installed: 2.75, measured: 0.12, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(r).toEqual({ ideal: 2.62, size: 2.6, predicted: 0.27, inSpec: true, change: true });
  });

  it("case 2: 2.40 removed, 0.30 measured, band 0.18-0.22, 0.02 steps -> 2.50, predicted 0.20", () => {
    // common practice (docs/trade.md, worked case 2)
    const r = recommendShim({
      installed: 2.4,
      measured: 0.3,
      spec: { min: 0.18, max: 0.22 },
      sizes: shimSeries(2.0, 3.0, 0.02),
    });
    expect(r).toMatchObject({ ideal: 2.5, size: 2.5, predicted: 0.2, inSpec: true, change: true });
  });

  it("case 3: 2.33 removed, 0.08 measured, target 0.15 -> ideal 2.26", () => {
    // common practice (docs/trade.md, worked case 3)
    const r = recommendShim({
      installed: 2.33,
      measured: 0.08,
      spec: { min: 0.1, max: 0.2, target: 0.15 },
      sizes: shimSeries(1.2, 3.0, 0.025),
    });
    expect(r.ideal).toBe(2.26);
    expect(r.size).toBe(2.25); // the 0.025 series has 2.250 and 2.275; 2.250 leaves 0.16, nearer than 0.135
    expect(r.predicted).toBe(0.16);
  });

  it("case 4: 2.50 removed, 0.28 measured, band 0.10-0.20 -> ideal 2.63, 2.65 nearest the target", () => {
    // common practice (docs/trade.md, worked case 4): 2.65 gives 0.13, 2.60 gives 0.18, both in spec
    const r = recommendShim({ installed: 2.5, measured: 0.28, spec: { min: 0.1, max: 0.2 }, sizes: series05 });
    expect(r).toEqual({ ideal: 2.63, size: 2.65, predicted: 0.13, inSpec: true, change: true });
    const only260 = recommendShim({ installed: 2.5, measured: 0.28, spec: { min: 0.1, max: 0.2 }, sizes: [2.6] });
    expect(only260).toMatchObject({ size: 2.6, predicted: 0.18, inSpec: true });
  });
});

describe("recommendShim: rules", () => {
  it("on a tie takes the thinner shim, leaving the valve looser", () => {
    // common practice (docs/trade.md): between two sizes lean to the looser one
    const r = recommendShim({ installed: 2.5, measured: 0.325, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(r.ideal).toBe(2.575);
    expect(r.size).toBe(2.55);
    expect(r.predicted).toBe(0.275);
  });

  it("keeps the shim when the valve is already in its band", () => {
    const r = recommendShim({ installed: 2.7, measured: 0.22, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(r).toEqual({ ideal: 2.67, size: 2.7, predicted: 0.22, inSpec: true, change: false });
  });

  it("uses a micrometer thickness exactly", () => {
    // 2.537 + 0.31 - 0.25 = 2.597: 2.60 leaves 0.247
    const r = recommendShim({ installed: 2.537, measured: 0.31, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(r).toMatchObject({ ideal: 2.597, size: 2.6, predicted: 0.247 });
  });

  it("when nothing reaches the band, takes the size nearest the band, never one that leaves no clearance", () => {
    // a very tight valve: gap 2.55 + 0.02 = 2.57; the thinnest size 2.50 leaves 0.07, band 0.20-0.30
    const r = recommendShim({ installed: 2.55, measured: 0.02, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(r).toMatchObject({ size: 2.5, predicted: 0.07, inSpec: false, change: true });
    // a very loose valve that the thickest size cannot close enough
    const loose = recommendShim({ installed: 3.2, measured: 0.6, spec: { min: 0.2, max: 0.3 }, sizes: series05 });
    expect(loose).toMatchObject({ size: 3.3, predicted: 0.5, inSpec: false });
    expect(() =>
      recommendShim({ installed: 2.5, measured: 0, spec: { min: 0.2, max: 0.3 }, sizes: [2.55, 2.6] }),
    ).toThrow(/leaves any clearance/);
  });

  it("rejects nonsense: negative clearance, an inverted band, no sizes", () => {
    const ok = { installed: 2.6, measured: 0.2, spec: { min: 0.2, max: 0.3 }, sizes: series05 };
    expect(() => recommendShim({ ...ok, measured: -0.1 })).toThrow(/measured.*cannot be negative/);
    expect(() => recommendShim({ ...ok, spec: { min: 0.3, max: 0.2 } })).toThrow(LashInputError);
    expect(() => recommendShim({ ...ok, spec: { min: 0.2, max: 0.3, target: 0.35 } })).toThrow(/target/);
    expect(() => recommendShim({ ...ok, sizes: [] })).toThrow(/at least one shim size/);
  });

  it("property: predicted is always installed + measured - size, and in spec when a size lands in the band", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2500, max: 3300 }),
        fc.integer({ min: 0, max: 800 }),
        fc.integer({ min: 50, max: 300 }),
        fc.integer({ min: 50, max: 150 }),
        (installedUm, measuredUm, minUm, widthUm) => {
          const [installed, measured] = [installedUm / 1000, measuredUm / 1000];
          const spec = { min: minUm / 1000, max: (minUm + widthUm) / 1000 };
          let r;
          try {
            r = recommendShim({ installed, measured, spec, sizes: series05 });
          } catch (e) {
            expect(e).toBeInstanceOf(LashInputError);
            return;
          }
          expect(Math.round((installed + measured - r.size) * 1e6)).toBe(Math.round(r.predicted * 1e6));
          const anyFits = series05.some((s) => {
            const p = Math.round((installed + measured - s) * 1e6);
            return p >= spec.min * 1e6 - 0.5 && p <= spec.max * 1e6 + 0.5;
          });
          if (measured < spec.min || measured > spec.max) expect(r.inSpec).toBe(anyFits);
          expect(r.predicted).toBeGreaterThan(0);
        },
      ),
      { numRuns: 500, seed: 20261202 },
    );
  });
});
