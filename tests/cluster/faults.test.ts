import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { killNode, startNode } from "../../scripts/lib/galera.mjs";
import { Client } from "../support/api";
import { clusterSpec, startInstances } from "../support/cluster";
import { makeUser } from "../support/fixtures";
import { startFaultProxy, type FaultProxy } from "../support/fault-proxy";
import { runFaultSync } from "../support/fault-sync";
import type { App } from "../support/server";

/**
 * Sync under faults on the cluster (tests/support/fault-sync.ts): phone A syncs through instance 1
 * (database node 1), phone B through instance 2 (node 2), each through its own misbehaving proxy,
 * and node 1 is killed as a crash would (SIGKILL) in the middle and started again: it rejoins
 * and catches up from the others. Instance 1 answers errors while its node is down.
 */
const TOTAL = Number(process.env.LASHWRIGHT_CLUSTER_FAULT_MUTATIONS ?? 1000);
const SEED = Number(process.env.LASHWRIGHT_FAULT_SEED ?? 20261202);
const DOWN_MS = 3000;

const spec = clusterSpec();
let apps: App[] = [];
let proxies: FaultProxy[] = [];
let user: { id: string; email: string; password: string };
let cookie = "";

beforeAll(async () => {
  apps = await startInstances(spec);
  proxies = await Promise.all(apps.map((a, i) => startFaultProxy(a.url, SEED + 10 * i)));
  user = await makeUser("cluster-faults");
  const c = new Client(apps[0]!.url);
  expect(await c.signIn("password", { email: user.email, password: user.password })).toBeNull();
  cookie = c.cookieHeader();
});
afterAll(async () => {
  await Promise.all(proxies.map((p) => p.close()));
  await Promise.all(apps.map((a) => a.stop()));
});

describe("sync under faults on a three-node cluster", () => {
  it(`${TOTAL} mutations from two phones on two instances, a database node killed and rejoined: none lost, none applied twice`, { timeout: 900_000 }, async () => {
    await runFaultSync({
      user,
      cookie,
      total: TOTAL,
      seed: SEED,
      bases: [proxies[0]!.url, proxies[1]!.url],
      proxies,
      midRun: async () => {
        await killNode(spec, 0);
        await new Promise((r) => setTimeout(r, DOWN_MS));
        await startNode(spec, 0);
      },
      midRunSays: "database node 1 killed, restarted and synced again",
    });
  });
});
