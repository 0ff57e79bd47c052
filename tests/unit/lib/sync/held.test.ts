import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { openLocalDb, type LocalDb } from "@/lib/sync/local-db";
import { waitingCount } from "@/lib/sync/outbox";
import { discardHeld, heldEntries, pushAll, retryHeld } from "@/lib/sync/phone-sync";
import { queueReading } from "../../support/phone-sync";

const checkId = "0b6f5c2e-1111-4a4a-9a9a-000000000002";

async function addReadings(db: LocalDb, valves: string[]) {
  for (const valve of valves) await queueReading(db, checkId, { valve, round: 0, feelerGo: 0.15 });
}

const valveOf = (args: unknown) => (args as { reading: { valve: string } }).reading.valve;

/**
 * A stand-in for server/sync.ts's push answer: refuses for good the readings of valves it is told
 * to, holds back ("later") the ones it is told to (and applies nothing after them), records its
 * refusals and says them again when a push is sent again after a lost answer.
 */
function fakeServer() {
  let last = 0;
  const applied: string[] = [];
  const refusedIds = new Map<number, string>();
  const refuse = new Set<string>();
  const hold = new Set<string>();
  let dropAnswer = false;
  const fetcher = async (_url: string, init: RequestInit) => {
    const body = JSON.parse(String(init.body)) as { mutations: { id: number; name: string; args: unknown }[] };
    const rejected = body.mutations
      .filter((m) => m.id <= last && refusedIds.has(m.id))
      .map((m) => ({ id: m.id, name: m.name, reason: refusedIds.get(m.id)! }));
    let later: { id: number; name: string; reason: string } | undefined;
    for (const m of body.mutations) {
      if (m.id <= last) continue;
      const v = valveOf(m.args);
      if (hold.has(v)) {
        later = { id: m.id, name: m.name, reason: "the server could not apply this change yet" };
        break;
      }
      if (refuse.has(v)) {
        refusedIds.set(m.id, `this engine has no valve ${v}`);
        rejected.push({ id: m.id, name: m.name, reason: refusedIds.get(m.id)! });
      } else applied.push(v);
      last = m.id;
    }
    if (dropAnswer) {
      dropAnswer = false;
      throw new TypeError("connection reset after commit");
    }
    return Response.json(later ? { lastMutationId: last, rejected, later } : { lastMutationId: last, rejected });
  };
  return { fetcher, applied, refuse, hold, dropNextAnswer: () => (dropAnswer = true) };
}

/** A new phone with a reading of each valve queued, and a server that refuses or holds back the valves named. */
async function phoneAndServer(
  valves: string[],
  { refuse = [], hold = [] }: { refuse?: string[]; hold?: string[] } = {},
) {
  const db = openLocalDb(crypto.randomUUID());
  const s = fakeServer();
  for (const v of refuse) s.refuse.add(v);
  for (const v of hold) s.hold.add(v);
  await addReadings(db, valves);
  return { db, s };
}

describe("a change the server does not apply stays on the phone", () => {
  it("refused for good: kept with its reason, not sent again, the rest goes through", async () => {
    const { db, s } = await phoneAndServer(["I1.1", "I9.1", "I2.1"], { refuse: ["I9.1"] });
    const r = await pushAll(db, s.fetcher);
    expect(r.rejected.map((x) => x.reason)).toEqual(["this engine has no valve I9.1"]);
    expect(s.applied).toEqual(["I1.1", "I2.1"]);
    const held = await heldEntries(db);
    expect(held.map((m) => [valveOf(m.args), m.held?.kind, m.held?.reason])).toEqual([
      ["I9.1", "refused", "this engine has no valve I9.1"],
    ]);
    // it no longer counts as waiting for a signal, and a later push does not send it
    expect(await waitingCount(db)).toBe(0);
    await addReadings(db, ["I3.1"]);
    await pushAll(db, s.fetcher);
    expect(s.applied).toEqual(["I1.1", "I2.1", "I3.1"]);
    expect(await db.outbox.count()).toBe(1);
  });

  it("an answer lost after the server refused: the refusal said again on the retry keeps the entry", async () => {
    const { db, s } = await phoneAndServer(["E1.1", "E9.1"], { refuse: ["E9.1"] });
    s.dropNextAnswer();
    await expect(pushAll(db, s.fetcher)).rejects.toThrow();
    await pushAll(db, s.fetcher);
    expect((await heldEntries(db)).map((m) => valveOf(m.args))).toEqual(["E9.1"]);
  });

  it("the mechanic sends it again (a new id, after what was queued since) or discards it", async () => {
    const { db, s } = await phoneAndServer(["I5.1", "I6.1"], { refuse: ["I5.1", "I6.1"] });
    await pushAll(db, s.fetcher);
    const [a, b] = await heldEntries(db);
    s.refuse.clear(); // what it depended on was fixed
    await retryHeld(db, a!.seq!);
    const retried = await db.outbox.get(a!.seq!);
    expect(retried!.held).toBeUndefined();
    expect(retried!.mutationId).toBeGreaterThan(b!.mutationId);
    await pushAll(db, s.fetcher);
    expect(s.applied).toEqual(["I5.1"]);
    expect((await heldEntries(db)).map((m) => valveOf(m.args))).toEqual(["I6.1"]);
    await db.meta.put({ key: "cursor", value: "o:7" });
    await discardHeld(db, b!.seq!);
    expect(await db.outbox.count()).toBe(0);
    // the next pull is a full one, so the server's copy of that record replaces the discarded change
    expect(await db.meta.get("cursor")).toBeUndefined();
  });

  it("discard never removes a change that is only waiting", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await addReadings(db, ["I1.1"]);
    const [m] = await db.outbox.toArray();
    await discardHeld(db, m!.seq!);
    expect(await db.outbox.count()).toBe(1);
  });

  it("held back for later: kept in its place, nothing after it sent, sent again under the same id", async () => {
    const { db, s } = await phoneAndServer(["I1.2", "I2.2", "I3.2"], { hold: ["I2.2"] });
    const r = await pushAll(db, s.fetcher);
    expect(r.later?.reason).toMatch(/yet/);
    expect(s.applied).toEqual(["I1.2"]);
    const entries = await db.outbox.orderBy("mutationId").toArray();
    expect(entries.map((m) => [valveOf(m.args), m.held?.kind ?? null])).toEqual([
      ["I2.2", "later"],
      ["I3.2", null],
    ]);
    expect(await waitingCount(db)).toBe(2);
    s.hold.clear();
    await pushAll(db, s.fetcher);
    expect(s.applied).toEqual(["I1.2", "I2.2", "I3.2"]);
    expect(await db.outbox.count()).toBe(0);
  });
});
