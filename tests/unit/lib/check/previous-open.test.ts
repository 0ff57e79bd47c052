import { describe, expect, it } from "vitest";
import { lastShims, previousCheck } from "@/lib/check/previous";
import { openValves, recheckValves, valveViews } from "@/lib/check/derive";
import type { LocalReading } from "@/lib/sync/local-db";
import { feelerReading, localEngine, oneValveEach } from "../../support/check-fixture";

// An invented twin (test data, not trade data): intake 0.10-0.15, exhaust 0.15-0.20, 0.05 series.
const engine = localEngine({
  id: "e1",
  ...oneValveEach("Test twin", [1, 2]),
  intake: { min: 0.1, max: 0.15 },
  exhaust: { min: 0.15, max: 0.2 },
});
const r = (
  valve: string,
  round: number,
  installedStamp: number,
  measured: number | null,
  fittedShim: number | null = null,
  installedMicrometer: number | null = null,
) => feelerReading(valve, installedStamp, measured, { round, fittedShim, installedMicrometer });
const states = (rs: LocalReading[]) => valveViews(engine, rs, () => 2.6);

describe("the previous check's shims", () => {
  it("takes the latest check of the same engine started before this one", () => {
    const at = (d: string) => `2026-0${d}T10:00:00Z`;
    const mine = { id: "now", engineId: "e1", startedAt: at("6-01") };
    const checks = [
      { id: "old", engineId: "e1", startedAt: at("1-01") },
      { id: "last", engineId: "e1", startedAt: at("5-01") },
      { id: "later", engineId: "e1", startedAt: at("7-01") },
      { id: "other", engineId: "e2", startedAt: at("5-15") },
      mine,
    ];
    expect(previousCheck(mine, checks)?.id).toBe("last");
    expect(previousCheck(checks[0]!, checks)).toBeUndefined();
  });

  it("is the fitted shim of the last round, else the micrometer, else the stamp", () => {
    const m = lastShims([
      r("I1.1", 1, 2.55, 0.12),
      r("I1.1", 0, 2.6, 0.05, 2.55),
      r("E1.1", 0, 2.6, 0.18, null, 2.584),
      r("I2.1", 0, 2.7, 0.12),
      r("E2.1", 0, 2.6, 0.1, 2.5),
    ]);
    expect(Object.fromEntries(m)).toEqual({ "I1.1": 2.55, "E1.1": 2.584, "I2.1": 2.7, "E2.1": 2.5 });
  });
});

describe("open valves and the re-check in progress", () => {
  it("counts out of band, waiting and never measured valves as open; in band and verified as settled", () => {
    const views = states([r("I1.1", 0, 2.6, 0.12), r("E1.1", 0, 2.6, 0.1, 2.55), r("I2.1", 0, 2.6, 0.05)]);
    expect(openValves(views).map((v) => [v.valve.id, v.state])).toEqual([
      ["E1.1", "fitted"],
      ["I2.1", "tight"],
      ["E2.1", "unmeasured"],
    ]);
  });

  it("asks for nothing before a fit, then for the fitted valves and those re-measured in the same round", () => {
    expect(recheckValves(states([r("I1.1", 0, 2.6, 0.05), r("E1.1", 0, 2.6, 0.18)]))).toEqual([]);
    const round1 = [
      r("I1.1", 0, 2.6, 0.05, 2.55),
      r("E1.1", 0, 2.6, 0.1, 2.55),
      r("I2.1", 0, 2.6, 0.12),
      r("E2.1", 0, 2.6, 0.17),
    ];
    expect(recheckValves(states(round1)).map((v) => v.valve.id)).toEqual(["I1.1", "E1.1"]);
    // I1.1 re-measured (still tight), E1.1 waiting: both belong to round 1
    const part = [...round1, r("I1.1", 1, 2.55, 0.08)];
    expect(recheckValves(states(part)).map((v) => v.valve.id)).toEqual(["I1.1", "E1.1"]);
  });

  it("lists only the valves changed again in a second round, not every valve of the first", () => {
    const rs = [
      r("I1.1", 0, 2.6, 0.05, 2.55),
      r("E1.1", 0, 2.6, 0.1, 2.55),
      r("I1.1", 1, 2.55, 0.08, 2.5), // still tight: a second shim fitted
      r("E1.1", 1, 2.55, 0.16), // verified in round 1
    ];
    expect(recheckValves(states(rs)).map((v) => v.valve.id)).toEqual(["I1.1"]);
    expect(recheckValves(states([...rs, r("I1.1", 2, 2.5, 0.12)])).map((v) => v.valve.id)).toEqual(["I1.1"]);
  });
});
