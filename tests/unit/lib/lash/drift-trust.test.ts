import { describe, expect, it } from "vitest";
import { gamma } from "mathjs";
import { linearRegression } from "simple-statistics";
import { driftProjection, fastClosingValves, t95 } from "@/lib/lash";
import { driftWords, engineHistory } from "@/lib/check/history";
import type { LocalCheck, LocalEngine, LocalReading } from "@/lib/sync/local-db";

/**
 * A trend is claimed only where the checks hold one (docs/trade.md: clearances close slowly, a valve
 * that keeps closing points to the seat, common practice). The readings below are invented for the
 * test, shaped after the three valves every mechanic meets: one that stays put, one that closes
 * steadily, one whose readings scatter.
 */
const at = (odometer: number, installed: number, measured: number) => ({ odometer, installed, measured });

describe("Student's t table", () => {
  it("each value leaves 2.5% in each tail of the t density (checked by integrating the density)", () => {
    // t density f(x) = G((v+1)/2) / (sqrt(v pi) G(v/2)) (1 + x^2/v)^(-(v+1)/2) (any statistics text);
    // Simpson's rule from -t to t must give 0.95 to within the table's three decimals
    for (const v of [1, 2, 3, 5, 10, 20, 30]) {
      const c = (gamma((v + 1) / 2) as number) / (Math.sqrt(v * Math.PI) * (gamma(v / 2) as number));
      const f = (x: number) => c * (1 + (x * x) / v) ** (-(v + 1) / 2);
      const t = t95(v);
      const n = 20_000;
      const h = (2 * t) / n;
      let sum = f(-t) + f(t);
      for (let i = 1; i < n; i++) sum += (i % 2 ? 4 : 2) * f(-t + i * h);
      expect((sum * h) / 3).toBeCloseTo(0.95, 3);
    }
    expect(t95(200)).toBe(1.96);
  });
});

describe("drift verdicts", () => {
  // readings that hold no trend: the verdict says why, and no range for the lower edge is drawn
  for (const { name, points, verdict } of [
    {
      name: "two checks never make a trend, however far apart (the case that cried wolf: 0.05 to 0.07 mm)",
      points: [at(20_000, 2.6, 0.25), at(45_000, 2.6, 0.18)],
      verdict: "few-checks",
    },
    {
      name: "a valve that stays put: readings a blade step apart either way, no trend and no projection",
      // gaps 2.85, 2.87, 2.85, 2.87 over 30,000 km: the line moves 0.012 mm, under one 0.025 mm step
      points: [at(0, 2.6, 0.25), at(10_000, 2.6, 0.27), at(20_000, 2.6, 0.25), at(30_000, 2.6, 0.27)],
      verdict: "steady",
    },
    {
      name: "a noisy valve: it seems to move, but the scatter is larger than the move; no trend claimed",
      // gaps 2.85, 2.95, 2.78, 2.90, 2.76: the line falls 0.04 mm over 40,000 km (more than a 0.025 step)
      // but the residuals are several steps wide, so the slope's 95% range spans zero
      points: [
        at(0, 2.6, 0.25),
        at(10_000, 2.6, 0.35),
        at(20_000, 2.6, 0.18),
        at(30_000, 2.6, 0.3),
        at(40_000, 2.6, 0.16),
      ],
      verdict: "unclear",
    },
  ])
    it(name, () => {
      const d = driftProjection({ points, lowerLimit: 0.2, resolution: 0.025 });
      expect(d.verdict).toBe(verdict);
      expect(d.limitRange).toBeNull();
    });

  it("three checks within a short distance make no trend", () => {
    const d = driftProjection({
      points: [at(10_000, 2.6, 0.25), at(10_600, 2.6, 0.2), at(11_200, 2.6, 0.15)],
      lowerLimit: 0.2,
      minSpan: 2000,
    });
    expect(d).toMatchObject({ verdict: "short-distance", checks: 3, span: 1200 });
  });

  it("a valve that closes steadily: a trend, and a range for the lower edge that holds the fitted point", () => {
    // gap 2.90, 2.85, 2.80, 2.75, 2.70 at 0, 10k ... 40k: -0.005 mm per 1,000 km exactly (shims changed
    // twice, the gap does not jump). Lower edge 0.20 with a 2.45 shim: gap 2.65, reached at 50,000 km
    // on the line. Blade step 0.025: sigma floor 0.025/sqrt(12) = 0.00722 mm; Sxx = 1,000 (thousand
    // km squared); SE = 0.000228; t(3) = 3.182: slope range -0.005 +- 0.000726.
    const pts = [
      at(0, 2.6, 0.3),
      at(10_000, 2.6, 0.25),
      at(20_000, 2.55, 0.25),
      at(30_000, 2.55, 0.2),
      at(40_000, 2.45, 0.25),
    ];
    const d = driftProjection({ points: pts, lowerLimit: 0.2, resolution: 0.025 });
    const ref = linearRegression(pts.map((p) => [p.odometer / 1000, p.installed + p.measured])); // reference library
    expect(d.slopePerThousandKm).toBeCloseTo(ref.m, 9);
    expect(d.verdict).toBe("closing");
    expect(d.limitAtOdometer).toBeCloseTo(50_000, 3);
    const half = 3.182 * (0.025 / Math.sqrt(12) / Math.sqrt(1000));
    // through the mean point (20k, 2.80): 20k + (2.65 - 2.80) / slope thousand km
    expect(d.limitRange!.from).toBeCloseTo((20 + -0.15 / (-0.005 - half)) * 1000, 0);
    expect(d.limitRange!.to).toBeCloseTo((20 + -0.15 / (-0.005 + half)) * 1000, 0);
    expect(d.limitRange!.from).toBeLessThan(50_000);
    expect(d.limitRange!.to!).toBeGreaterThan(50_000);
  });

  it("only a real closing trend is called a job for the head", () => {
    const base = [
      { valveId: "E1.1", slopePerThousandKm: -0.001, verdict: "steady" as const },
      { valveId: "E1.2", slopePerThousandKm: -0.0012, verdict: "steady" as const },
      { valveId: "E2.1", slopePerThousandKm: -0.0008, verdict: "steady" as const },
    ];
    expect(fastClosingValves([...base, { valveId: "E2.2", slopePerThousandKm: -0.006, verdict: "closing" }])).toEqual([
      "E2.2",
    ]);
    // the same rate from a scatter of readings is not a finding
    expect(fastClosingValves([...base, { valveId: "E2.2", slopePerThousandKm: -0.006, verdict: "unclear" }])).toEqual(
      [],
    );
    // nor from two checks: a valve without a trend is left out of the comparison altogether
    expect(
      fastClosingValves([...base.slice(0, 2), { valveId: "E2.2", slopePerThousandKm: -0.006, verdict: "few-checks" }]),
    ).toEqual([]);
  });
});

describe("the engine's history in words", () => {
  const engine = {
    id: "e",
    cylinders: 1,
    intakePerCylinder: 1,
    exhaustPerCylinder: 1,
    odometerUnit: "km",
    intake: { min: 0.1, max: 0.2 },
    exhaust: { min: 0.2, max: 0.3 },
  } as unknown as LocalEngine;
  const check = (id: string, odometer: number) => ({ id, engineId: "e", odometer }) as unknown as LocalCheck;
  const reading = (checkId: string, valve: string, installed: number, go: number, noGo: number) =>
    ({
      checkId,
      valve,
      round: 0,
      installedStamp: installed,
      feelerGo: go,
      feelerNoGo: noGo,
      measured: go,
    }) as unknown as LocalReading;

  it("after two checks: no warning, no projection to the kilometre", () => {
    const h = engineHistory(
      engine,
      [check("a", 20_000), check("b", 45_000)],
      [reading("a", "E1.1", 2.6, 0.25, 0.28), reading("b", "E1.1", 2.6, 0.18, 0.2)],
    );
    expect(h.fastClosing).toEqual([]);
    const e = h.valves.find((v) => v.valveId === "E1.1")!;
    expect(driftWords(e, "km")).toBe("No trend yet: a trend needs three checks (2 so far).");
  });

  it("a steady closer gets a rounded range with its method named", () => {
    const checks = [0, 10_000, 20_000, 30_000, 40_000].map((o, i) => check(`c${i}`, o));
    const rs = [0.3, 0.28, 0.25, 0.23, 0.2].map((m, i) =>
      reading(`c${i}`, "E1.1", 2.6, m, Math.round((m + 0.025) * 1000) / 1000),
    );
    const e = engineHistory(engine, checks, rs).valves.find((v) => v.valveId === "E1.1")!;
    expect(e.drift.verdict).toBe("closing");
    const words = driftWords(e, "km");
    expect(words).toMatch(/^E1\.1 closes about 0\.003 mm per 1,000 km\. /);
    // the last check (40,000) is already inside the range's early end: said as "by about"
    expect(words).toMatch(/near the band's lower edge already, and on this trend reaches it by about 49,500 km/);
    expect(words).toContain("(95% range from the spread of the readings)");
    // every figure in it is a multiple of 500
    for (const n of words.match(/\d{1,3}(,\d{3})+ km/g) ?? []) expect(Number(n.replace(/[, km]/g, "")) % 500).toBe(0);
  });
});
