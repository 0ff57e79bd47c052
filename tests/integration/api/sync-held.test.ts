import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { signedInClient, type Client } from "../../support/api";
import { countOf } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { startApp, type App } from "../../support/server";

/**
 * The server's two kinds of "not applied": refused for good (recorded, said again to a push sent
 * again after a lost answer, so the phone keeps it) and "later" (a name this server does not know,
 * as from a phone already on a newer build: nothing from it on is applied and the phone sends it
 * again under the same id).
 */
let app: App;
let mara: Client;
beforeAll(async () => {
  app = await startApp();
  mara = await signedInClient(app.url, await makeUser("held"));
});
afterAll(() => app?.stop());

const reading = (checkId: string, valve: string) => ({
  name: "reading.put/1",
  args: { checkId, reading: { valve, installedStamp: 2.6, feelerGo: 0.15, feelerNoGo: 0.18 } },
});

function engineAndCheck() {
  const engineId = crypto.randomUUID();
  const checkId = crypto.randomUUID();
  return {
    checkId,
    mutations: [
      { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId } },
      { id: 2, name: "check.put/1", args: { id: checkId, engineId, odometer: 21_000 } },
    ],
  };
}

describe("a change the server does not apply", () => {
  it("refused for good is said again when the same push comes again (its answer was lost)", async () => {
    const clientId = crypto.randomUUID();
    const { checkId, mutations } = engineAndCheck();
    const push = {
      clientId,
      mutations: [...mutations, { id: 3, ...reading(checkId, "I9.1") }, { id: 4, ...reading(checkId, "I1.1") }],
    };
    const first = await mara.post("/api/sync/push", push);
    expect(first.json).toEqual({
      lastMutationId: 4,
      rejected: [{ id: 3, name: "reading.put/1", reason: expect.stringMatching(/no valve I9\.1/) }],
    });
    const again = await mara.post("/api/sync/push", push);
    expect(again.json).toEqual(first.json);
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(1);
  });

  it("a name this server does not know is held for later: nothing after it applied, the same id taken later", async () => {
    const clientId = crypto.randomUUID();
    const { checkId, mutations } = engineAndCheck();
    const res = await mara.post("/api/sync/push", {
      clientId,
      mutations: [
        ...mutations,
        { id: 3, ...reading(checkId, "I1.1") },
        { id: 4, name: "reading.put/9", args: {} },
        { id: 5, ...reading(checkId, "I2.1") },
      ],
    });
    expect(res.json).toEqual({
      lastMutationId: 3,
      rejected: [],
      later: { id: 4, name: "reading.put/9", reason: 'unknown change "reading.put/9"' },
    });
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(1);
    expect(await countOf("SELECT COUNT(*) AS n FROM rejected_mutations WHERE client_id = ?", [clientId])).toBe(0);
    // once the phone drops it by the mechanic's choice (or the server learns the name), the rest goes through
    const next = await mara.post("/api/sync/push", { clientId, mutations: [{ id: 5, ...reading(checkId, "I2.1") }] });
    expect(next.json).toEqual({ lastMutationId: 5, rejected: [] });
    expect(await countOf("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [checkId])).toBe(2);
  });

  it("a name held for later at the head of the push changes nothing", async () => {
    const clientId = crypto.randomUUID();
    const res = await mara.post("/api/sync/push", {
      clientId,
      mutations: [{ id: 1, name: "shim.teleport/1", args: {} }],
    });
    expect(res.json).toEqual({
      lastMutationId: 0,
      rejected: [],
      later: { id: 1, name: "shim.teleport/1", reason: expect.stringMatching(/unknown change/) },
    });
  });
});
