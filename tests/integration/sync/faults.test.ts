import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { makeUser } from "../../support/fixtures";
import { startFaultProxy, type FaultProxy } from "../../support/fault-proxy";
import { runFaultSync } from "../../support/fault-sync";
import { startApp, type App } from "../../support/server";

/**
 * Sync under faults on one server (tests/support/fault-sync.ts), restarted once in the middle.
 * 2,000 mutations here; `npm run soak` runs 10,000.
 */
const TOTAL = Number(process.env.LASHWRIGHT_FAULT_MUTATIONS ?? 2000);
const SEED = Number(process.env.LASHWRIGHT_FAULT_SEED ?? 20261202);

let app: App;
let proxy: FaultProxy;
let user: { id: string; email: string; password: string };
let cookie = "";

beforeAll(async () => {
  // two robot phones writing 2,000 changes in seconds, far beyond a person: the write budget
  // (server/sync.ts) is raised so this measures faults, not the budget
  app = await startApp({ SYNC_WRITES_PER_MINUTE: "10000000" });
  proxy = await startFaultProxy(app.url, SEED);
  user = await makeUser("faults");
  const c = new Client(app.url);
  expect(await c.signIn("password", { email: user.email, password: user.password })).toBeNull();
  cookie = c.cookieHeader();
});
afterAll(async () => {
  await proxy?.close();
  await app?.stop();
});

describe("sync under faults", () => {
  it(`${TOTAL} mutations from two phones: none lost, none applied twice`, { timeout: 1_800_000 }, async () => {
    await runFaultSync({
      user,
      cookie,
      total: TOTAL,
      seed: SEED,
      bases: [proxy.url, proxy.url],
      proxies: [proxy],
      midRun: () => app.restart(),
      midRunSays: "server restarted",
    });
  });
});
