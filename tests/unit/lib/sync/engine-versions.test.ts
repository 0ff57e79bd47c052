import "fake-indexeddb/auto";
import Dexie from "dexie";
import { describe, expect, it } from "vitest";
import { parseMutation } from "@/lib/sync/mutations";
import { openLocalDb, getMeta } from "@/lib/sync/local-db";
import { beginFit, saveCheck, saveEngine, saveReading, setTurned, toggleFitTask, toggleSwap } from "@/lib/sync/save";
import { valvesOfMoves, workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import type { ShimMove } from "@/lib/lash";
import { ENGINE_FOUR } from "../../../fixtures/engines";

// An invented four (test data): bands and series are placeholders, not trade data.
const id = "0b6f5c2e-3333-4a4a-9a9a-000000000001";
const FOUR = { id, ...ENGINE_FOUR };

describe("engine mutations: the shape an older phone sent still means what it meant", () => {
  it('"engine.put/1" accepts the first shape, and drops where the shims sit if it is sent there', () => {
    const old = parseMutation("engine.put/1", FOUR);
    expect(old.ok).toBe(true);
    const sent = parseMutation("engine.put/1", { ...FOUR, shimPosition: "under" });
    expect(sent.ok && "shimPosition" in (sent.args as object)).toBe(false);
  });

  it('"engine.put/2" carries it: over, under, or null (not said); anything else is refused with its field', () => {
    for (const p of ["over", "under", null]) {
      const r = parseMutation("engine.put/2", { ...FOUR, shimPosition: p });
      expect(r.ok && (r.args as { shimPosition: unknown }).shimPosition).toBe(p);
    }
    expect(parseMutation("engine.put/2", FOUR)).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^shimPosition:/),
    });
    expect(parseMutation("engine.put/2", { ...FOUR, shimPosition: "beside" })).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/over" or "under/),
    });
    // the profile's other rules still hold in the new version
    expect(parseMutation("engine.put/2", { ...FOUR, shimPosition: "over", firingOrder: [1, 2] })).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^firingOrder/),
    });
  });

  it('"engine.put/2" drops the side nearest the mechanic if it is sent there: only "/3" carries it', () => {
    const sent = parseMutation("engine.put/2", { ...FOUR, shimPosition: "under", nearSide: "intake" });
    expect(sent.ok && "nearSide" in (sent.args as object)).toBe(false);
  });

  it('"engine.put/3" carries the side nearest the mechanic, intake or exhaust; missing or anything else is refused with its field', () => {
    for (const side of ["intake", "exhaust"]) {
      const r = parseMutation("engine.put/3", { ...FOUR, shimPosition: "under", nearSide: side });
      expect(r.ok && (r.args as { nearSide: unknown }).nearSide).toBe(side);
    }
    expect(parseMutation("engine.put/3", { ...FOUR, shimPosition: "under" })).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^nearSide:/),
    });
    expect(parseMutation("engine.put/3", { ...FOUR, shimPosition: "under", nearSide: "top" })).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/"intake" or "exhaust"/),
    });
  });

  it("the phone saves an engine as engine.put/3, keeping both answers locally (the side: exhaust unless said)", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await saveEngine(db, { ...FOUR, shimPosition: "under", nearSide: "intake" } as never);
    expect((await db.engines.get(id))?.nearSide).toBe("intake");
    await saveEngine(db, { ...FOUR, shimPosition: "under" } as never);
    expect((await db.engines.get(id))?.shimPosition).toBe("under");
    expect(
      (await db.outbox.toArray()).map((o) => [
        o.name,
        (o.args as { shimPosition: unknown }).shimPosition,
        (o.args as { nearSide: unknown }).nearSide,
      ]),
    ).toEqual([
      ["engine.put/3", "under", "intake"],
      ["engine.put/3", "under", "exhaust"],
    ]);
  });
});

describe("the phone's database, versions 3 and 4", () => {
  it("an engine kept by an older app version opens as not said (null), nothing else changed", async () => {
    const userId = crypto.randomUUID();
    // the database as version 2 of the app left it
    const old = new Dexie(`lashwright-${userId}`);
    old.version(1).stores({
      engines: "id, name",
      checks: "id, engineId, startedAt",
      readings: "[checkId+valve+round], checkId",
      tray: "id, size",
      comments: "id, checkId",
      outbox: "++seq, &mutationId",
      meta: "key",
    });
    old.version(2).stores({ photos: "id, checkId, state" });
    await old.open();
    await old.table("engines").put({ ...FOUR, mirrored: true });
    old.close();
    const db = openLocalDb(userId);
    const e = await db.engines.get(id);
    expect(e?.shimPosition).toBeNull();
    expect(e?.mirrored).toBe(true);
    // version 4: the side nearest the mechanic, the exhausts, as the diagram was always drawn
    expect(e?.nearSide).toBe("exhaust");
    expect(db.verno).toBe(4);
  });
});

describe("an under-bucket fit's ticks", () => {
  const checkId = "0b6f5c2e-3333-4a4a-9a9a-0000000000c1";
  const moves: ShimMove[] = [
    { size: 2.6, from: { kind: "valve", valveId: "E2.1" }, to: { kind: "valve", valveId: "I1.1" } },
    { size: 2.55, from: { kind: "tray" }, to: { kind: "valve", valveId: "E2.1" } },
  ];

  it("the changed valves are every valve a shim leaves or reaches", () => {
    expect(valvesOfMoves(moves).sort()).toEqual(["E2.1", "I1.1"]);
  });

  it("tasks, swaps and the re-check's two-turn check are kept together, none wiping another", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await db.engines.put({ id } as never);
    await saveCheck(db, { id: checkId, engineId: id, odometer: 1000, measuredHot: false });
    for (const v of ["I1.1", "E2.1"])
      await saveReading(db, checkId, {
        valve: v,
        round: 0,
        installedStamp: 2.6,
        installedMicrometer: null,
        feelerGo: 0.05,
        feelerNoGo: null,
        measured: 0.05,
        method: "feeler",
        fittedShim: null,
      });
    await beginFit(db, checkId, moves);
    expect(await toggleFitTask(db, checkId, "timing")).toBe(true);
    await toggleFitTask(db, checkId, "mark");
    await toggleSwap(db, checkId, 0);
    expect(await toggleFitTask(db, checkId, "mark")).toBe(false);
    await setTurned(db, checkId, true);
    const order = await getMeta<WorkOrderState>(db, workOrderKey(checkId));
    expect(order).toMatchObject({ done: [true, false], tasks: ["timing"], turned: true });
  });
});
