import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Client } from "../support/api";
import { signedInClient } from "../support/api";
import { startInstances } from "../support/cluster";
import { rawConnection } from "../support/db";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import type { App } from "../support/server";

/**
 * One user's phones on two app instances, each on its own database node: what one writes the
 * other pulls at once, and writes to the same reading from both at once all land, the last one
 * committed on top and every earlier one in the reading's history.
 */
let apps: App[] = [];
let phones: Client[] = [];

const uuid = () => crypto.randomUUID();
// feeler blades in mm (common metric set, from memory) and shim stamps 2.50 to 3.30 in 0.05 steps
const BLADES = [0.05, 0.08, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33];
/** the k-th distinct reading: stamp and blade pair together name k */
const value = (k: number) => ({
  installedStamp: Math.round((2.5 + (k % 17) * 0.05) * 100) / 100,
  feelerGo: BLADES[Math.floor(k / 17) % 11]!,
  feelerNoGo: BLADES[(Math.floor(k / 17) % 11) + 1]!,
});
const key = (r: { installedStamp: unknown; feelerGo: unknown }) =>
  `${Number(r.installedStamp).toFixed(2)}/${Number(r.feelerGo).toFixed(2)}`;

async function push(phone: Client, clientId: string, mutations: { id: number; name: string; args: unknown }[]) {
  return phone.post("/api/sync/push", { clientId, mutations });
}

async function engineAndCheck(phone: Client) {
  const engineId = uuid();
  const checkId = uuid();
  const r = await push(phone, uuid(), [
    { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId } },
    { id: 2, name: "check.put/1", args: { id: checkId, engineId, odometer: 21_000 } },
  ]);
  expect(r.json).toEqual({ lastMutationId: 2, rejected: [] });
  return checkId;
}

beforeAll(async () => {
  apps = await startInstances();
  const u = await makeUser("cluster-sync");
  phones = await Promise.all(apps.map((a) => signedInClient(a.url, u)));
});
afterAll(async () => {
  await Promise.all(apps.map((a) => a.stop()));
});

describe("two instances on two database nodes", () => {
  // Counted, not timed: a pull waits until its node has applied every write committed anywhere
  // before it (wsrep_sync_wait in db/queries/sync.ts), so the very first pull through the other
  // node after the push's answer must hold the change. How long the two took is printed as a figure.
  it("a change pushed through one instance is in the first pull through the other after the push's answer", async () => {
    const [one, two] = phones as [Client, Client];
    const checkId = await engineAndCheck(one);
    const start = await two.post("/api/sync/pull", { cursor: null });
    expect(start.status).toBe(200);
    const t0 = Date.now();
    const r = await push(one, uuid(), [
      { id: 1, name: "reading.put/1", args: { checkId, reading: { valve: "I1.1", ...value(0) } } },
    ]);
    expect(r.json.rejected).toEqual([]);
    const p = await two.post("/api/sync/pull", { cursor: start.json.cursor });
    console.log(`[cluster] a push through instance 1 and then a pull through instance 2 took ${Date.now() - t0} ms`);
    expect(p.status).toBe(200);
    expect(
      (p.json.readings as { checkId: string; valve: string }[])
        .filter((x) => x.checkId === checkId)
        .map((x) => x.valve),
    ).toEqual(["I1.1"]);
  });

  it(
    "writes to one reading from both instances at once: no 5xx, the last committed on top, every earlier one in the history",
    { timeout: 120_000 },
    async () => {
      const [one, two] = phones as [Client, Client];
      const checkId = await engineAndCheck(one);
      const clients = [uuid(), uuid()];
      const write = (phone: Client, i: number, mutationId: number, k: number) =>
        push(phone, clients[i]!, [
          { id: mutationId, name: "reading.put/1", args: { checkId, reading: { valve: "E2.1", ...value(k) } } },
        ]);
      // one after the other first: the later write wins and the earlier goes to the history
      expect((await write(one, 0, 1, 0)).status).toBe(200);
      expect((await write(two, 1, 1, 1)).status).toBe(200);
      const ROUNDS = 12;
      const statuses: number[] = [];
      for (let round = 1; round <= ROUNDS; round++) {
        const answers = await Promise.all([
          write(one, 0, round + 1, 2 * round),
          write(two, 1, round + 1, 2 * round + 1),
        ]);
        for (const a of answers) {
          statuses.push(a.status);
          if (a.status === 200) expect(a.json.rejected).toEqual([]);
        }
      }
      expect(statuses.filter((s) => s !== 200)).toEqual([]);
      const db = await rawConnection();
      await db.query("SET SESSION wsrep_sync_wait = 1");
      const [[current]] = (await db.query(
        "SELECT id, installed_stamp AS installedStamp, feeler_go AS feelerGo FROM readings WHERE check_id = ? AND valve = 'E2.1'",
        [checkId],
      )) as unknown as [{ id: string; installedStamp: string; feelerGo: string }[]];
      const [history] = (await db.query(
        "SELECT JSON_VALUE(previous, '$.installedStamp') AS installedStamp, JSON_VALUE(previous, '$.feelerGo') AS feelerGo FROM reading_history WHERE reading_id = ? ORDER BY replaced_at, id",
        [current!.id],
      )) as unknown as [{ installedStamp: string; feelerGo: string }[]];
      await db.end();
      const written = Array.from({ length: 2 * ROUNDS + 2 }, (_, k) => key(value(k)));
      // each write exactly once: on top, or replaced and kept
      expect([...history.map(key), key(current!)].sort()).toEqual([...written].sort());
      // the sequential pair: the first write was the first replaced
      expect(key(history[0]!)).toBe(key(value(0)));
    },
  );

  it("the same push through both instances at once applies once", async () => {
    const [one, two] = phones as [Client, Client];
    const checkId = await engineAndCheck(one);
    const clientId = uuid();
    const valves = ["I", "E"].flatMap((k) => [1, 2, 3, 4].flatMap((c) => [1, 2].map((i) => `${k}${c}.${i}`)));
    for (let round = 0; round < 5; round++) {
      const batch = valves.map((valve, i) => ({
        id: round * 100 + i + 1,
        name: "reading.put/1",
        args: { checkId, reading: { valve, round, ...value(i) } },
      }));
      const [a, b] = await Promise.all([push(one, clientId, batch), push(two, clientId, batch)]);
      expect([a.status, b.status]).toEqual([200, 200]);
      expect([a.json.lastMutationId, b.json.lastMutationId]).toEqual([round * 100 + 16, round * 100 + 16]);
    }
    const db = await rawConnection();
    await db.query("SET SESSION wsrep_sync_wait = 1");
    const [[n]] = (await db.query(
      "SELECT (SELECT COUNT(*) FROM readings WHERE check_id = ?) AS readings, (SELECT COUNT(*) FROM reading_history h JOIN readings r ON r.id = h.reading_id WHERE r.check_id = ?) AS history, (SELECT last_mutation_id FROM sync_clients WHERE id = ?) AS last",
      [checkId, checkId, clientId],
    )) as unknown as [{ readings: number; history: number; last: number }[]];
    await db.end();
    expect({ readings: Number(n!.readings), history: Number(n!.history), last: Number(n!.last) }).toEqual({
      readings: 80,
      history: 0,
      last: 416,
    });
  });
});
