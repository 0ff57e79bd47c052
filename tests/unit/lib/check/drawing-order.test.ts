import { describe, expect, it } from "vitest";
import { valveNames } from "@/lib/lash";
import { diagramRows, drawingOrder, drawnValveOrder, facingOf } from "@/lib/check/diagram";

/**
 * The one drawing order (phone, review and worksheet draw from it). The engine is the inline six of
 * four valves per cylinder the bench report used (invented test data); a mirrored engine is drawn as
 * seen with cylinder 1 on the mechanic's right, each cylinder's valves numbered from the cylinder-1 end.
 */
const six = valveNames({ cylinders: 6, intakePerCylinder: 2, exhaustPerCylinder: 2 }).map((valve) => ({ valve }));

describe("the drawing order of an engine", () => {
  it("facing the usual way: cylinder 1 on the left, I1.1 before I1.2, intakes on top, exhausts nearest", () => {
    const o = drawnValveOrder(six, { mirrored: false, nearSide: "exhaust" });
    expect(o.top.slice(0, 4)).toEqual(["I1.1", "I1.2", "I2.1", "I2.2"]);
    expect(o.bottom.slice(-2)).toEqual(["E6.1", "E6.2"]);
  });

  it("mirrored: cylinder 1 on the right and each cylinder turned round, I1.2 left of I1.1", () => {
    const o = drawnValveOrder(six, { mirrored: true, nearSide: "exhaust" });
    expect(o.top).toEqual([
      "I6.2",
      "I6.1",
      "I5.2",
      "I5.1",
      "I4.2",
      "I4.1",
      "I3.2",
      "I3.1",
      "I2.2",
      "I2.1",
      "I1.2",
      "I1.1",
    ]);
    expect(o.bottom).toEqual([
      "E6.2",
      "E6.1",
      "E5.2",
      "E5.1",
      "E4.2",
      "E4.1",
      "E3.2",
      "E3.1",
      "E2.2",
      "E2.1",
      "E1.2",
      "E1.1",
    ]);
  });

  it("with the intake side nearest the mechanic, the intakes are drawn at the bottom and the exhausts on top", () => {
    for (const mirrored of [false, true]) {
      const d = drawingOrder(six, { mirrored, nearSide: "intake" });
      expect([d.top, d.bottom]).toEqual(["exhaust", "intake"]);
      const o = drawnValveOrder(six, { mirrored, nearSide: "intake" });
      expect(o.top.every((v) => v.startsWith("E"))).toBe(true);
      expect(o.bottom.every((v) => v.startsWith("I"))).toBe(true);
      // which side is near does not turn the engine left to right
      expect(o.bottom).toEqual(drawnValveOrder(six, { mirrored, nearSide: "exhaust" }).top);
    }
  });

  it("the phone's wrapped rows hold the same order, row after row", () => {
    for (const mirrored of [false, true])
      for (const nearSide of ["intake", "exhaust"] as const) {
        const rows = diagramRows(six, { mirrored, nearSide }, 300);
        expect(rows.length).toBeGreaterThan(1);
        const flat = rows.flat();
        expect({
          top: flat.flatMap((g) => g.top.map((v) => v.valve.id)),
          bottom: flat.flatMap((g) => g.bottom.map((v) => v.valve.id)),
        }).toEqual(drawnValveOrder(six, { mirrored, nearSide }));
      }
  });

  it("an engine kept from before the profile asked has its exhausts nearest", () => {
    expect(facingOf({ mirrored: true, nearSide: null })).toEqual({ mirrored: true, nearSide: "exhaust" });
    expect(facingOf({ mirrored: false })).toEqual({ mirrored: false, nearSide: "exhaust" });
  });
});
