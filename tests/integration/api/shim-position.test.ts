import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { startApp, type App } from "../../support/server";

/**
 * Where an engine's shims sit travels with the engine profile: "engine.put/2" carries it, and an
 * older phone's "engine.put/1" (which never had it) still applies without wiping the answer a newer
 * phone gave. The REST routes and the pull show it; a value that is not over or under is refused
 * with its field and changes nothing.
 */
let app: App;
let mara: Client;
beforeAll(async () => {
  app = await startApp();
  const u = await makeUser("shimpos");
  mara = new Client(app.url);
  expect(await mara.signIn("password", { email: u.email, password: u.password })).toBeNull();
});
afterAll(() => app?.stop());

const uuid = () => crypto.randomUUID();

async function stored(engineId: string) {
  const db = await rawConnection();
  const [rows] = await db.query("SELECT shim_position AS p, name FROM engines WHERE id = ?", [engineId]);
  await db.end();
  return (rows as { p: string | null; name: string }[])[0];
}

describe("where the shims sit, through sync and REST", () => {
  it("an older phone's engine.put/1 makes an engine that does not say; /2 says; a later /1 keeps what /2 said", async () => {
    const clientId = uuid();
    const engineId = uuid();
    const push = (id: number, name: string, args: object) =>
      mara.post("/api/sync/push", { clientId, mutations: [{ id, name, args }] });
    expect((await push(1, "engine.put/1", { ...ENGINE_FOUR, id: engineId })).json).toEqual({
      lastMutationId: 1,
      rejected: [],
    });
    expect(await stored(engineId)).toEqual({ p: null, name: ENGINE_FOUR.name });
    expect(
      (await push(2, "engine.put/2", { ...ENGINE_FOUR, id: engineId, shimPosition: "under" })).json.rejected,
    ).toEqual([]);
    expect((await stored(engineId))?.p).toBe("under");
    // a second, older phone renames the engine: its mutation has no field, and the answer stays
    expect(
      (
        await push(3, "engine.put/1", {
          ...ENGINE_FOUR,
          id: engineId,
          name: "Renamed on the old phone",
          shimPosition: "over",
        })
      ).json.rejected,
    ).toEqual([]);
    expect(await stored(engineId)).toEqual({ p: "under", name: "Renamed on the old phone" });
    // the pull gives it to every phone
    const pull = await mara.post("/api/sync/pull", { cursor: null });
    expect(pull.json.engines.find((e: { id: string }) => e.id === engineId)).toMatchObject({
      shimPosition: "under",
      name: "Renamed on the old phone",
    });
  });

  it("a value that is neither over nor under is refused with its reason and changes nothing", async () => {
    const clientId = uuid();
    const engineId = uuid();
    const r = await mara.post("/api/sync/push", {
      clientId,
      mutations: [
        { id: 1, name: "engine.put/2", args: { ...ENGINE_FOUR, id: engineId, shimPosition: "over" } },
        { id: 2, name: "engine.put/2", args: { ...ENGINE_FOUR, id: engineId, shimPosition: "beside" } },
      ],
    });
    expect(r.json.rejected).toEqual([
      { id: 2, name: "engine.put/2", reason: expect.stringMatching(/^shimPosition: .*over" or "under/) },
    ]);
    expect((await stored(engineId))?.p).toBe("over");
  });

  it("REST: POST and GET show it, PATCH changes it alone, a bad value is a 422 on its field", async () => {
    const made = await mara.post("/api/engines", { ...ENGINE_FOUR, shimPosition: "over" });
    expect(made.status).toBe(201);
    expect(made.json.engine.shimPosition).toBe("over");
    const id = made.json.engine.id as string;
    const unsaid = await mara.post("/api/engines", ENGINE_FOUR);
    expect(unsaid.json.engine.shimPosition).toBeNull();
    const patched = await mara.patch(`/api/engines/${id}`, { shimPosition: "under" });
    expect(patched.status).toBe(200);
    expect(patched.json.engine).toMatchObject({ shimPosition: "under", name: ENGINE_FOUR.name });
    // a change of something else keeps the answer
    expect((await mara.patch(`/api/engines/${id}`, { name: "Four, renamed" })).json.engine.shimPosition).toBe("under");
    const bad = await mara.patch(`/api/engines/${id}`, { shimPosition: "sideways" });
    expect(bad.status).toBe(422);
    expect(bad.json.error.fields).toHaveProperty(["shimPosition"]);
    expect((await mara.get(`/api/engines/${id}`)).json.engine.shimPosition).toBe("under");
  });
});
