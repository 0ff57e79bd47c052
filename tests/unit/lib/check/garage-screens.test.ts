import { describe, expect, it } from "vitest";
import { valveNames, METRIC_BLADES_MM } from "@/lib/lash";
import { diagramRows, groupWidth } from "@/lib/check/diagram";
import { bladeStrip, noGoOf } from "@/lib/check/blades";
import { measuringOrder } from "@/lib/check/measuring";
import { shimWords, valveRounds } from "@/lib/check/rounds";
import { trayForEngine } from "@/lib/check/pool";
import { feelerReading } from "../../support/check-fixture";

const LEFT = { mirrored: false, nearSide: "exhaust" } as const;
const views = (cylinders: number, i: number, e: number) =>
  valveNames({ cylinders, intakePerCylinder: i, exhaustPerCylinder: e }).map((valve) => ({ valve }));

describe("the diagram's rows", () => {
  it("fit the width and are balanced: six cylinders of four 44 px cells on a 300 px phone as 2, 2 and 2", () => {
    const rows = diagramRows(views(6, 2, 2), LEFT, 300);
    expect(rows.map((r) => r.map((g) => g.cylinder))).toEqual([
      [1, 2],
      [3, 4],
      [5, 6],
    ]);
    expect(2 * groupWidth(2) + 8).toBeLessThanOrEqual(300);
    expect(3 * groupWidth(2) + 2 * 8).toBeGreaterThan(300);
  });

  it("never puts more in a row than fit, down to one cylinder of five valves", () => {
    for (const cyl of [1, 2, 4, 6, 8, 12, 16])
      for (const [i, e] of [
        [1, 1],
        [2, 1],
        [2, 2],
        [3, 2],
      ] as const) {
        const rows = diagramRows(views(cyl, i, e), LEFT, 300);
        for (const r of rows)
          expect(r.length * groupWidth(Math.max(i, e)) + (r.length - 1) * 8).toBeLessThanOrEqual(300);
        expect(rows.flat()).toHaveLength(cyl);
      }
  });

  it("mirrored, reverses the cylinders and the valves inside each", () => {
    const rows = diagramRows(views(2, 2, 2), { mirrored: true, nearSide: "exhaust" }, 300);
    expect(rows[0]!.map((g) => [g.cylinder, g.top.map((v) => v.valve.id), g.bottom.map((v) => v.valve.id)])).toEqual([
      [2, ["I2.2", "I2.1"], ["E2.2", "E2.1"]],
      [1, ["I1.2", "I1.1"], ["E1.2", "E1.1"]],
    ]);
  });
});

describe("the blade strip", () => {
  it("is centred on the band: tight, in-band and loose blades of an intake 0.10-0.20 all on it, 18 at most", () => {
    const strip = bladeStrip(METRIC_BLADES_MM, { min: 0.1, max: 0.2 });
    expect(strip).toHaveLength(18);
    for (const b of [0.03, 0.06, 0.08, 0.1, 0.15, 0.2, 0.23, 0.28]) expect(strip).toContain(b);
    // an exhaust 0.20-0.30 strip reaches the loose side
    expect(bladeStrip(METRIC_BLADES_MM, { min: 0.2, max: 0.3 })).toEqual(
      expect.arrayContaining([0.1, 0.25, 0.33, 0.4]),
    );
  });

  it("takes the next blade of the whole set as the no-go, even past the strip", () => {
    expect(noGoOf(METRIC_BLADES_MM, 0.1)).toBe(0.13);
    expect(noGoOf(METRIC_BLADES_MM, 1.0)).toBeUndefined();
  });
});

describe("the measuring order", () => {
  it("follows the rotation guide of an inline six 1-5-3-6-2-4, valve by valve", () => {
    // docs/trade.md (derived): at TDC 1 intake 1, 2, 4 and exhaust 1, 3, 5; at TDC 6 the rest
    const o = measuringOrder({
      cylinders: 6,
      intakePerCylinder: 2,
      exhaustPerCylinder: 2,
      firingOrder: [1, 5, 3, 6, 2, 4],
      firingAngles: null,
      timing: undefined,
    });
    expect(o.positions).toHaveLength(2);
    const atTdc1 = "I1.1 I1.2 I2.1 I2.2 I4.1 I4.2 E1.1 E1.2 E3.1 E3.2 E5.1 E5.2";
    const atTdc6 = "I3.1 I3.2 I5.1 I5.2 I6.1 I6.2 E2.1 E2.2 E4.1 E4.2 E6.1 E6.2";
    expect(o.stops.map((s) => s.valveId)).toEqual([...atTdc1.split(" "), ...atTdc6.split(" ")]);
  });
});

describe("a valve's rounds for the reviewer", () => {
  it("shows stamp and micrometer together, and every round in order", () => {
    expect(shimWords({ installedStamp: 2.8, installedMicrometer: 2.78 })).toBe("2.80 stamp, 2.780 micrometer");
    const rounds = valveRounds(
      [
        feelerReading("I1.1", 2.7, 0.13, { round: 1, feelerNoGo: 0.15 }),
        feelerReading("I1.1", 2.8, 0.05, { installedMicrometer: 2.78, feelerNoGo: 0.06, fittedShim: 2.7 }),
      ],
      "I1.1",
      "mm",
    );
    expect(rounds.map((r) => `${r.title}: ${r.text}`)).toEqual([
      "First reading: 2.80 stamp, 2.780 micrometer · 0.05 mm goes, 0.06 mm does not · then fitted 2.70",
      "Re-check 1: 2.70 stamp · 0.13 mm goes, 0.15 mm does not",
    ]);
  });
});

describe("tray shims for an engine", () => {
  it("leaves out empty rows and shims of another diameter, trusting those with none noted", () => {
    const tray = [
      { size: 2.5, count: 2, shimDiameter: 7.48 },
      { size: 2.55, count: 0, shimDiameter: null },
      { size: 2.6, count: 3, shimDiameter: 9.48 },
      { size: 2.65, count: 1, shimDiameter: null },
    ];
    const r = trayForEngine({ shimDiameter: 7.48 }, tray);
    expect(r.usable.map((t) => t.size)).toEqual([2.5, 2.65]);
    expect(r.otherSystem).toBe(3);
  });
});
