import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { fitTicks, workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import { workOrder, type Assignment, type ShimMove } from "@/lib/lash";
import { getMeta, type LocalDb } from "@/lib/sync/local-db";
import { beginFit, toggleSwaps } from "@/lib/sync/save";
import { localReading } from "../../support/check-fixture";
import { phoneWithReading } from "../../support/phone-sync";

/** One tick per valve that gets a shim, holding every move that change needs. Sizes invented. */
const a = (valveId: string, size: number, source: Assignment["source"]): Assignment => ({
  valveId,
  size,
  predicted: 0.25,
  source,
  inSpec: true,
  ideal: size,
});

/** Each move as from>to: a valve by its name, else the tray, the shop or aside. */
const route = (moves: ShimMove[]) =>
  moves.map(
    (m) =>
      `${m.from.kind === "valve" ? m.from.valveId : m.from.kind}>${m.to.kind === "valve" ? m.to.valveId : m.to.kind}`,
  );

describe("the Fit step's ticks", () => {
  it("a bought or tray shim: the valve's own shim out and the new one in are one tick", () => {
    const moves = workOrder([a("I1.1", 2.75, { kind: "buy" }), a("E2.1", 2.5, { kind: "tray" })], {
      "I1.1": 2.6,
      "E2.1": 2.6,
    });
    expect(moves).toHaveLength(4);
    expect(fitTicks(moves)).toEqual([
      [0, 1],
      [2, 3],
    ]);
  });

  it("a shim passed on to another valve: its two ends are one tick, so a chain of two valves is two ticks", () => {
    // I1.1 takes E1.1's 2.55; E1.1 gets a bought 2.70; I1.1's own 2.60 goes to the tray
    const moves = workOrder([a("I1.1", 2.55, { kind: "valve", valveId: "E1.1" }), a("E1.1", 2.7, { kind: "buy" })], {
      "I1.1": 2.6,
      "E1.1": 2.55,
    });
    expect(route(moves)).toEqual(["I1.1>tray", "E1.1>I1.1", "shop>E1.1"]);
    expect(fitTicks(moves)).toEqual([[0, 1], [2]]);
  });

  it("two valves trading shims: one set aside to start, three moves in two ticks", () => {
    const moves = workOrder(
      [a("I1.1", 2.55, { kind: "valve", valveId: "I2.1" }), a("I2.1", 2.6, { kind: "valve", valveId: "I1.1" })],
      { "I1.1": 2.6, "I2.1": 2.55 },
    );
    expect(route(moves)).toEqual(["I1.1>aside", "I2.1>I1.1", "aside>I2.1"]);
    expect(fitTicks(moves)).toEqual([[0, 1], [2]]);
  });

  it("twelve changes from the shop take twelve ticks, not twenty-four", () => {
    const ids = Array.from({ length: 12 }, (_, i) => `I${i + 1}.1`);
    const moves = workOrder(
      ids.map((id) => a(id, 2.75, { kind: "buy" })),
      Object.fromEntries(ids.map((id) => [id, 2.6])),
    );
    expect(moves).toHaveLength(24);
    expect(fitTicks(moves)).toHaveLength(12);
  });
});

describe("ticking a change", () => {
  const engineId = "0b6f5c2e-1111-4a4a-9a9a-00000000000e";
  const checkId = "0b6f5c2e-1111-4a4a-9a9a-000000000002";
  const moves: ShimMove[] = [
    { size: 2.6, from: { kind: "valve", valveId: "I1.1" }, to: { kind: "tray" } },
    { size: 2.75, from: { kind: "shop" }, to: { kind: "valve", valveId: "I1.1" } },
  ];
  async function fitting(done?: boolean[]): Promise<LocalDb> {
    const db = await phoneWithReading(engineId, checkId, localReading("I1.1", { measured: 0.4, method: "typed" }));
    await beginFit(db, checkId, moves);
    // a list ticked move by move by an older version of the app is kept as it was
    if (done) await db.meta.put({ key: workOrderKey(checkId), value: { moves, done } } as never);
    return db;
  }
  const tray = async (db: LocalDb) =>
    Object.fromEntries((await db.tray.toArray()).map((t) => [t.size.toFixed(2), t.count]));

  it("one tap moves the old shim to the tray and fits the new one; a second tap undoes both", async () => {
    const db = await fitting();
    expect(await toggleSwaps(db, checkId, [0, 1])).toBe(true);
    expect(await tray(db)).toEqual({ "2.60": 1 });
    expect((await db.readings.get([checkId, "I1.1", 0]))?.fittedShim).toBe(2.75);
    expect((await getMeta<WorkOrderState>(db, workOrderKey(checkId)))?.done).toEqual([true, true]);
    expect(await toggleSwaps(db, checkId, [0, 1])).toBe(false);
    expect(await tray(db)).toEqual({ "2.60": 0 });
    expect((await db.readings.get([checkId, "I1.1", 0]))?.fittedShim).toBeNull();
  });

  it("a change half ticked by an older app is finished by one tap, without moving the ticked half twice", async () => {
    const db = await fitting([true, false]);
    // the tray already had the 2.60 from the older app's first tick
    await db.tray.clear();
    expect(await toggleSwaps(db, checkId, [0, 1])).toBe(true);
    expect(await tray(db)).toEqual({});
    expect((await db.readings.get([checkId, "I1.1", 0]))?.fittedShim).toBe(2.75);
    expect((await getMeta<WorkOrderState>(db, workOrderKey(checkId)))?.done).toEqual([true, true]);
  });
});
