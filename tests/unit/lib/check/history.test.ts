import { describe, expect, it } from "vitest";
import { linearRegression } from "simple-statistics";
import { engineHistory } from "@/lib/check/history";
import { valveViews, checkPlan } from "@/lib/check/derive";
import type { LocalCheck } from "@/lib/sync/local-db";
import { feelerReading, localEngine, oneValveEach } from "../../support/check-fixture";

// An invented single (test data, not trade data): intake 0.10-0.15, exhaust 0.15-0.20, 0.05 series.
const engine = localEngine({
  id: "e1",
  ...oneValveEach("Test single", [1]),
  intake: { min: 0.1, max: 0.15 },
  exhaust: { min: 0.15, max: 0.2 },
});
const check = (id: string, odometer: number): LocalCheck => ({
  id,
  engineId: "e1",
  odometer,
  measuredHot: false,
  status: "closed",
  notes: null,
  startedAt: new Date(odometer).toISOString(),
  closedAt: null,
});
const reading = (
  checkId: string,
  valve: string,
  installed: number,
  measured: number,
  round = 0,
  fittedShim: number | null = null,
) => feelerReading(valve, installed, measured, { checkId, round, fittedShim });

describe("engine history", () => {
  it("tracks the gap across a shim change and fits the same line as simple-statistics", () => {
    const checks = [check("a", 5000), check("b", 15000), check("c", 25000)];
    const readings = [
      reading("a", "E1.1", 2.6, 0.19),
      reading("b", "E1.1", 2.6, 0.14, 0, 2.55), // tight: a 2.55 was fitted
      reading("b", "E1.1", 2.55, 0.19, 1), // re-measured after fitting: the gap is unchanged
      reading("c", "E1.1", 2.55, 0.16),
      reading("a", "I1.1", 2.6, 0.13),
      reading("c", "I1.1", 2.6, 0.125),
    ];
    const h = engineHistory(engine, checks, readings);
    const ex = h.valves.find((v) => v.valveId === "E1.1")!;
    expect(ex.points.map((p) => p.gap)).toEqual([2.79, 2.74, 2.74, 2.71]);
    // reference library: simple-statistics linearRegression on (odometer, gap)
    const ref = linearRegression(ex.points.map((p) => [p.odometer, p.gap]));
    expect(ex.drift.slopePerThousandKm).toBeCloseTo(ref.m * 1000, 10);
    expect(ex.currentShim).toBe(2.55);
    // projected where gap - 2.55 reaches 0.15
    expect(ex.drift.limitAtOdometer).toBeCloseTo((2.7 - ref.b) / ref.m, 3);
  });

  it("derives valve states and a plan from a check's readings", () => {
    const rs = [reading("a", "I1.1", 2.6, 0.13), reading("a", "E1.1", 2.6, 0.1)];
    const views = valveViews(engine, rs, () => 2.6);
    expect(views.map((v) => v.state)).toEqual(["in-band", "tight"]);
    const plan = checkPlan(engine, views, [])!;
    // 2.60 + 0.10 - 0.175 = 2.525: 2.50 gives 0.20 (in band, 0.025 off), 2.55 gives 0.15 (0.025 off): the thinner wins
    expect(plan.assignments[1]).toMatchObject({ valveId: "E1.1", size: 2.5, predicted: 0.2, source: { kind: "buy" } });
    const fitted = valveViews(engine, [rs[0]!, { ...rs[1]!, fittedShim: 2.5 }], () => 2.6);
    expect(fitted[1]).toMatchObject({ state: "fitted", installed: 2.5, nextRound: 1 });
    const verified = valveViews(
      engine,
      [rs[0]!, { ...rs[1]!, fittedShim: 2.5 }, reading("a", "E1.1", 2.5, 0.18, 1)],
      () => 2.6,
    );
    expect(verified[1]!.state).toBe("verified");
  });
});
