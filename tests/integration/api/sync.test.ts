import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { countOf, historyRows, rawConnection } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { startApp, type App } from "../../support/server";

let app: App;
let mara: Client;
let other: Client;
beforeAll(async () => {
  app = await startApp();
  const [a, b] = await Promise.all([makeUser("sync-a"), makeUser("sync-b")]);
  mara = new Client(app.url);
  other = new Client(app.url);
  expect(await mara.signIn("password", { email: a.email, password: a.password })).toBeNull();
  expect(await other.signIn("password", { email: b.email, password: b.password })).toBeNull();
});
afterAll(() => app?.stop());

const uuid = () => crypto.randomUUID();

function engineAndCheck() {
  const engineId = uuid();
  const checkId = uuid();
  return {
    engineId,
    checkId,
    mutations: [
      { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId } },
      { id: 2, name: "check.put/1", args: { id: checkId, engineId, odometer: 21_000 } },
    ],
  };
}

const reading = (checkId: string, valve: string, go: number, noGo: number) => ({
  name: "reading.put/1",
  args: { checkId, reading: { valve, installedStamp: 2.6, feelerGo: go, feelerNoGo: noGo } },
});

describe("sync push and pull on MariaDB", () => {
  it("the same push twice applies once", async () => {
    const clientId = uuid();
    const { checkId, mutations } = engineAndCheck();
    const batch = [
      ...mutations,
      { id: 3, ...reading(checkId, "I1.1", 0.15, 0.18) },
      { id: 4, ...reading(checkId, "I1.2", 0.13, 0.15) },
    ];
    const first = await mara.post("/api/sync/push", { clientId, mutations: batch });
    expect(first.status).toBe(200);
    expect(first.json).toEqual({ lastMutationId: 4, rejected: [] });
    const again = await mara.post("/api/sync/push", { clientId, mutations: batch });
    expect(again.json).toEqual({ lastMutationId: 4, rejected: [] });
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(2);
    expect(await historyRows([checkId])).toBe(0);
  });

  it("a check recorded after the fact (check.put/2) keeps its own day; a day ahead of now is refused", async () => {
    const clientId = uuid();
    const { engineId, checkId, mutations } = engineAndCheck();
    const later = uuid();
    const res = await mara.post("/api/sync/push", {
      clientId,
      mutations: [
        mutations[0],
        {
          id: 2,
          name: "check.put/2",
          args: { id: checkId, engineId, odometer: 9000, status: "closed", startedAt: "2021-06-05T12:00:00.000Z" },
        },
        {
          id: 3,
          name: "check.put/2",
          args: { id: later, engineId, odometer: 9500, startedAt: "2999-01-01T12:00:00.000Z" },
        },
      ],
    });
    expect(res.json.lastMutationId).toBe(3);
    expect(res.json.rejected).toEqual([
      { id: 3, name: "check.put/2", reason: "startedAt: must lie between 1950 and today" },
    ]);
    const db = await rawConnection();
    const [rows] = await db.query(
      "SELECT DATE_FORMAT(started_at, '%Y-%m-%d %H:%i') AS s, DATE_FORMAT(closed_at, '%Y-%m-%d %H:%i') AS c, status FROM checks WHERE engine_id = ?",
      [engineId],
    );
    await db.end();
    expect(rows).toEqual([{ s: "2021-06-05 12:00", c: "2021-06-05 12:00", status: "closed" }]);
    // and the pull gives the phone the same day back
    const pull = await mara.post("/api/sync/pull", { cursor: null });
    expect(new Date(pull.json.checks.find((c: { id: string }) => c.id === checkId).startedAt).toISOString()).toBe(
      "2021-06-05T12:00:00.000Z",
    );
  });

  it("a push whose response is lost, retried with more behind it, applies each mutation once", async () => {
    const clientId = uuid();
    const { checkId, mutations } = engineAndCheck();
    const readings16 = Array.from({ length: 16 }, (_, i) => ({
      id: 3 + i,
      ...reading(checkId, `${i % 2 ? "E" : "I"}${Math.floor(i / 4) + 1}.${(Math.floor(i / 2) % 2) + 1}`, 0.2, 0.23),
    }));
    const first = [...mutations, ...readings16.slice(0, 10)];
    await mara.post("/api/sync/push", { clientId, mutations: first }); // pretend this answer never arrived
    const retry = await mara.post("/api/sync/push", { clientId, mutations: [...mutations, ...readings16] });
    expect(retry.json.lastMutationId).toBe(18);
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(16);
    expect(await historyRows([checkId])).toBe(0);
  });

  it("two devices editing the same reading keep the later write; the earlier stays in the history", async () => {
    const phone = uuid();
    const tablet = uuid();
    const { checkId, mutations } = engineAndCheck();
    await mara.post("/api/sync/push", {
      clientId: phone,
      mutations: [...mutations, { id: 3, ...reading(checkId, "E2.1", 0.25, 0.28) }],
    });
    await mara.post("/api/sync/push", {
      clientId: tablet,
      mutations: [{ id: 1, ...reading(checkId, "E2.1", 0.23, 0.25) }],
    });
    const r = await mara.get(`/api/checks/${checkId}/readings`);
    expect(r.json.readings).toHaveLength(1);
    expect(r.json.readings[0]).toMatchObject({ valve: "E2.1", feelerGo: 0.23, feelerNoGo: 0.25, measured: 0.23 });
    const db = await rawConnection();
    const [hist] = await db.query(
      "SELECT h.previous FROM reading_history h JOIN readings r ON r.id = h.reading_id WHERE r.check_id = ?",
      [checkId],
    );
    await db.end();
    const previous = (hist as { previous: string | Record<string, unknown> }[]).map((h) =>
      typeof h.previous === "string" ? JSON.parse(h.previous) : h.previous,
    );
    expect(previous).toEqual([expect.objectContaining({ feelerGo: 0.25, feelerNoGo: 0.28 })]);
  });

  it("a refused mutation is recorded with its reason and does not block the ones after it", async () => {
    const clientId = uuid();
    const { checkId, mutations } = engineAndCheck();
    const res = await mara.post("/api/sync/push", {
      clientId,
      mutations: [
        ...mutations,
        { id: 3, ...reading(checkId, "I9.1", 0.15, 0.18) }, // the four has no cylinder 9
        { id: 4, name: "reading.put/1", args: { checkId, reading: { valve: "I1.1", feelerGo: -0.2 } } },
        { id: 6, ...reading(checkId, "I2.1", 0.15, 0.18) },
      ],
    });
    expect(res.json.lastMutationId).toBe(6);
    expect(res.json.rejected.map((r: { id: number }) => r.id)).toEqual([3, 4]);
    expect(res.json.rejected[0].reason).toMatch(/no valve I9\.1/);
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(1);
    expect(await countOf("SELECT COUNT(*) AS n FROM rejected_mutations WHERE client_id = ?", [clientId])).toBe(2);
  });

  it("a mutation for another user's record is refused, and another user's device id is refused", async () => {
    const clientId = uuid();
    const { engineId, checkId, mutations } = engineAndCheck();
    await mara.post("/api/sync/push", { clientId, mutations });
    const theirs = uuid();
    const res = await other.post("/api/sync/push", {
      clientId: theirs,
      mutations: [
        { id: 1, ...reading(checkId, "I1.1", 0.1, 0.13) },
        { id: 2, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: "Taken over" } },
        { id: 3, name: "engine.delete/1", args: { id: engineId } },
      ],
    });
    expect(res.json.rejected.map((r: { id: number }) => r.id)).toEqual([1, 2]);
    expect((await mara.get(`/api/engines/${engineId}`)).json.engine.name).toBe(ENGINE_FOUR.name);
    // another user's device id, with changes behind it that would apply under his own (a new engine
    // and check of his): refused whole, none written, her device's last id untouched
    const lastId = () => countOf("SELECT last_mutation_id AS n FROM sync_clients WHERE id = ?", [clientId]);
    expect(await lastId()).toBe(2);
    const own = engineAndCheck();
    const stolen = await other.post("/api/sync/push", {
      clientId,
      mutations: own.mutations.map((m) => ({ ...m, id: m.id + 2 })),
    });
    expect(stolen.status).toBe(403);
    expect(await lastId()).toBe(2);
    expect(await countOf("SELECT COUNT(*) AS n FROM engines WHERE id = ?", [own.engineId])).toBe(0);
    expect(await countOf("SELECT COUNT(*) AS n FROM checks WHERE id = ?", [own.checkId])).toBe(0);
    // the same changes under his own device id are his to make: they were refused for the id alone
    expect(
      (
        await other.post("/api/sync/push", {
          clientId: theirs,
          mutations: own.mutations.map((m) => ({ ...m, id: m.id + 3 })),
        })
      ).json,
    ).toEqual({ lastMutationId: 5, rejected: [] });
    expect((await mara.get(`/api/engines/${engineId}`)).json.engine.name).toBe(ENGINE_FOUR.name);
  });

  it("pull returns changes after the cursor, then a tombstone for a deletion", async () => {
    const clientId = uuid();
    const { engineId, checkId, mutations } = engineAndCheck();
    const before = await mara.post("/api/sync/pull", { cursor: null });
    expect(before.status).toBe(200);
    await mara.post("/api/sync/push", {
      clientId,
      mutations: [...mutations, { id: 3, ...reading(checkId, "I1.1", 0.15, 0.18) }],
    });
    const after = await mara.post("/api/sync/pull", { cursor: before.json.cursor });
    expect(after.json.engines.map((e: { id: string }) => e.id)).toEqual([engineId]);
    expect(after.json.checks.map((c: { id: string }) => c.id)).toEqual([checkId]);
    expect(after.json.readings).toHaveLength(1);
    await mara.post("/api/sync/push", {
      clientId,
      mutations: [{ id: 4, name: "engine.delete/1", args: { id: engineId } }],
    });
    const gone = await mara.post("/api/sync/pull", { cursor: after.json.cursor });
    expect(gone.json.tombstones).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ entity: "engine", id: engineId }),
        expect.objectContaining({ entity: "check", id: checkId }),
      ]),
    );
    expect(gone.json.engines).toEqual([]);
    // the other user's pull shows none of it
    const theirs = await other.post("/api/sync/pull", { cursor: null });
    expect(JSON.stringify(theirs.json)).not.toContain(engineId);
  });

  it("a phone holding an old numeric cursor gets one full pull and a cursor of today's kind", async () => {
    const { checkId, mutations } = engineAndCheck();
    await mara.post("/api/sync/push", {
      clientId: uuid(),
      mutations: [...mutations, { id: 3, ...reading(checkId, "I1.1", 0.15, 0.18) }],
    });
    const fresh = await mara.post("/api/sync/pull", { cursor: null });
    const old = await mara.post("/api/sync/pull", { cursor: 987_654 });
    expect(old.status).toBe(200);
    expect(old.json.full).toBe(true);
    expect(old.json.cursor).toMatch(/^o:\d+$/);
    expect(old.json.checks.map((c: { id: string }) => c.id).sort()).toEqual(
      fresh.json.checks.map((c: { id: string }) => c.id).sort(),
    );
    // nothing new since: an empty answer and the same cursor
    const again = await mara.post("/api/sync/pull", { cursor: old.json.cursor });
    expect(again.json).toMatchObject({
      cursor: old.json.cursor,
      full: false,
      engines: [],
      checks: [],
      readings: [],
      tombstones: [],
    });
    expect((await mara.post("/api/sync/pull", { cursor: "o:x" })).status).toBe(422);
  });

  it("anonymous pushes get 401 and change nothing", async () => {
    // a whole engine and check, as a phone would send them: none of it may be written, nor the device
    const { engineId, checkId, mutations } = engineAndCheck();
    const clientId = uuid();
    const res = await new Client(app.url).post("/api/sync/push", {
      clientId,
      mutations: [...mutations, { id: 3, ...reading(checkId, "I1.1", 0.1, 0.13) }],
    });
    expect(res.status).toBe(401);
    expect(await countOf("SELECT COUNT(*) AS n FROM engines WHERE id = ?", [engineId])).toBe(0);
    expect(await countOf("SELECT COUNT(*) AS n FROM checks WHERE id = ?", [checkId])).toBe(0);
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(0);
    expect(await countOf("SELECT COUNT(*) AS n FROM sync_clients WHERE id = ?", [clientId])).toBe(0);
  });
});
