import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import type { ShimMove } from "@/lib/lash";
import { getMeta, type LocalDb } from "@/lib/sync/local-db";
import { beginFit, saveTrayItem, toggleSwap } from "@/lib/sync/save";
import { feelerReading } from "../../support/check-fixture";
import { phoneWithReading } from "../../support/phone-sync";

const engineId = "0b6f5c2e-1111-4a4a-9a9a-00000000000e";
const checkId = "0b6f5c2e-1111-4a4a-9a9a-000000000001";
const trayId = "0b6f5c2e-1111-4a4a-9a9a-0000000000a1";

// a swap list for two valves (invented sizes): I1.1's 2.60 out to the tray, a 2.55 from the tray into I1.1
const moves: ShimMove[] = [
  { size: 2.6, from: { kind: "valve", valveId: "I1.1" }, to: { kind: "tray" } },
  { size: 2.55, from: { kind: "tray" }, to: { kind: "valve", valveId: "I1.1" } },
];

async function fitting(): Promise<LocalDb> {
  const db = await phoneWithReading(engineId, checkId, feelerReading("I1.1", 2.6, 0.05, { feelerNoGo: 0.06 }));
  await saveTrayItem(db, { id: trayId, size: 2.55, measuredSize: false, count: 1 });
  await beginFit(db, checkId, moves);
  await db.outbox.clear();
  return db;
}

const traySizes = async (db: LocalDb) =>
  Object.fromEntries((await db.tray.toArray()).map((t) => [t.size.toFixed(2), t.count]));

describe("ticking a swap in Fit", () => {
  it("writes the tray move, the fitted shim and the tick together", async () => {
    const db = await fitting();
    expect(await toggleSwap(db, checkId, 1)).toBe(true);
    expect(await traySizes(db)).toEqual({ "2.55": 0 });
    expect((await db.readings.get([checkId, "I1.1", 0]))?.fittedShim).toBe(2.55);
    expect((await getMeta<WorkOrderState>(db, workOrderKey(checkId)))?.done).toEqual([false, true]);
    expect((await db.outbox.toArray()).map((e) => e.name)).toEqual(["tray.put/1", "reading.put/1"]);
  });

  it("never takes the shim twice: two taps in flight read the tick inside one transaction each", async () => {
    const db = await fitting();
    const [a, b] = await Promise.all([toggleSwap(db, checkId, 1), toggleSwap(db, checkId, 1)]);
    expect([a, b].sort()).toEqual([false, true]);
    expect(await traySizes(db)).toEqual({ "2.55": 1 });
    expect((await db.readings.get([checkId, "I1.1", 0]))?.fittedShim).toBeNull();
  });

  it("saves nothing when a part of the tick fails (the page closing half-way leaves no half-tick)", async () => {
    const db = await fitting();
    // the valve's reading is gone: the tray move comes first and must roll back with the rest
    await db.readings.clear();
    await expect(toggleSwap(db, checkId, 1)).rejects.toThrow(/no reading/);
    expect(await traySizes(db)).toEqual({ "2.55": 1 });
    expect(await db.outbox.count()).toBe(0);
    expect((await getMeta<WorkOrderState>(db, workOrderKey(checkId)))?.done).toEqual([false, false]);
  });

  it("keeps a list being worked through, and starts a new one once the last is finished", async () => {
    const db = await fitting();
    await toggleSwap(db, checkId, 0);
    const other: ShimMove[] = [{ size: 2.5, from: { kind: "shop" }, to: { kind: "valve", valveId: "I1.1" } }];
    await beginFit(db, checkId, other);
    expect((await getMeta<WorkOrderState>(db, workOrderKey(checkId)))?.moves).toEqual(moves);
    await toggleSwap(db, checkId, 1);
    await beginFit(db, checkId, other);
    expect(await getMeta<WorkOrderState>(db, workOrderKey(checkId))).toEqual({ moves: other, done: [false] });
    expect((await db.checks.get(checkId))?.status).toBe("fitting");
  });
});
