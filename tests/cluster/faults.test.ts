import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { existsSync, readFileSync } from "node:fs";
import { killNode, nodeActivity, nodeStatus, startNode } from "../../scripts/lib/galera.mjs";
import { Client, signedInClient } from "../support/api";
import { clusterSpec, startInstances } from "../support/cluster";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
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
// hunting a rare stall: kill and restart node 1 this many times in a row (with more mutations, so the phones go on meanwhile)
const KILLS = Number(process.env.LASHWRIGHT_CLUSTER_FAULT_KILLS ?? 1);

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

/**
 * Writes one after another through instance 2 (node 2) for as long as it runs, each retried after a
 * 503 as a phone would: the longest time one write took to be answered with success is the pause a
 * surviving node's writers see while the cluster notices a node that vanished. That pause is a figure
 * (printed, and in the README), not a pass mark: it is Galera's, usually 6 to 13 s here, but twice
 * (once in CI) over a minute of nothing but 503s after node 1 was back, cause not found. What must hold:
 * every request answered (api.ts bounds each at 120 s), only success or 503, and writes through
 * again within RESUME_MS, a bound for a stall that ends, not for a wedge.
 */
const RESUME_MS = 240_000;
function steadyWriter(phone: Client) {
  const clientId = crypto.randomUUID();
  const engineId = crypto.randomUUID();
  let running = true;
  const stats = {
    writes: 0,
    longestMs: 0,
    busyAnswers: 0,
    otherFailures: 0,
    failures: new Map<string, number>(),
    gaveUp: 0,
    /** the slowest single answer: how long, and what it was */
    slowest: { ms: 0, status: 0 },
    /** taken once, when a write has waited 15 s: what each node was busy with at that moment */
    stalled: "",
  };
  const note = (what: string) => {
    stats.otherFailures++;
    stats.failures.set(what, (stats.failures.get(what) ?? 0) + 1);
  };
  const done = (async () => {
    for (let id = 1; running; id++) {
      const t0 = performance.now();
      // one write is tried until it goes through, within RESUME_MS (a phone would keep it and try later)
      for (; performance.now() - t0 < RESUME_MS;) {
        if (!stats.stalled && performance.now() - t0 > 15_000) stats.stalled = await nodesBusy();
        const t1 = performance.now();
        const r = await phone
          .post("/api/sync/push", {
            clientId,
            mutations: [
              { id, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: `Pause probe ${id}` } },
            ],
          })
          .catch((e: unknown) => ({ status: 0, json: { error: String((e as Error)?.cause ?? e) } }));
        if (performance.now() - t1 > stats.slowest.ms) stats.slowest = { ms: performance.now() - t1, status: r.status };
        if (r.status === 200) break;
        if (r.status === 503 && r.json?.error) stats.busyAnswers++;
        // what came back, so a failure names its cause in the test's output
        else note(`${r.status} ${JSON.stringify(r.json?.error ?? r.json).slice(0, 200)}`);
        await new Promise((res) => setTimeout(res, 100));
      }
      if (performance.now() - t0 >= RESUME_MS) stats.gaveUp++;
      stats.longestMs = Math.max(stats.longestMs, performance.now() - t0);
      stats.writes++;
      await new Promise((res) => setTimeout(res, 50));
    }
  })();
  return async () => {
    running = false;
    await done;
    return stats;
  };
}

/** Each node's statements running for a second or more and its wsrep wait counters, now. */
async function nodesBusy() {
  const all = await Promise.all(spec.nodes.map(nodeActivity));
  return all
    .map((a, i) => `  node ${i + 1}: ${a ? `${a.counters}\n    ${a.busy.split("\n").join("\n    ")}` : "no answer"}`)
    .join("\n");
}

/** What a node's error log says of its last start: recovery, the state transfer (IST or a full copy). */
function rejoinLines(n: { errFile: string }) {
  if (!existsSync(n.errFile)) return "  (no log)";
  const lines = readFileSync(n.errFile, "utf8").split("\n");
  return lines
    .slice(-400)
    .filter((l) => /IST|SST|State transfer|Recovered position|donor|Donor|Synchronized with group|Flow|gcache/i.test(l))
    .slice(-60)
    .map((l) => `  ${l.slice(0, 240)}`)
    .join("\n");
}

/** Each node's state and the last lines of its error log: what a stuck run prints. */
async function clusterState() {
  const states = await Promise.all(spec.nodes.map(nodeStatus));
  return spec.nodes
    .map((n, i) => {
      const log = existsSync(n.errFile)
        ? readFileSync(n.errFile, "utf8").trim().split("\n").slice(-20).join("\n    ")
        : "";
      return `  node ${i + 1}: ${JSON.stringify(states[i])}\n    ${log}`;
    })
    .join("\n");
}

describe("sync under faults on a three-node cluster", () => {
  it(
    `${TOTAL} mutations from two phones on two instances, a database node killed and rejoined: none lost, none applied twice`,
    // about 30 s here; the bound leaves room for a slow machine, and the watchdog says where a stuck run is
    { timeout: 420_000 * KILLS + RESUME_MS },
    async () => {
      const watchdog = setTimeout(
        () => void clusterState().then((s) => console.log(`[faults] still running after 300 s:\n${s}`)),
        300_000,
      );
      await runFaultSync({
        user,
        cookie,
        total: TOTAL,
        seed: SEED,
        bases: [proxies[0]!.url, proxies[1]!.url],
        proxies,
        midRun: async () => {
          const stopWriter = steadyWriter(await signedInClient(apps[1]!.url, user));
          for (let k = 0; k < KILLS; k++) {
            await new Promise((r) => setTimeout(r, 1000));
            await killNode(spec, 0);
            await new Promise((r) => setTimeout(r, DOWN_MS));
            await startNode(spec, 0);
          }
          await new Promise((r) => setTimeout(r, 1000));
          const w = await stopWriter();
          console.log(
            `[faults] writes through instance 2 (node 2) from 1 s before node 1 was killed to 1 s after it was back: ${w.writes}, the longest took ${Math.round(w.longestMs)} ms; the slowest answer ${Math.round(w.slowest.ms)} ms (${w.slowest.status}); 503 answers ${w.busyAnswers}, other failures ${w.otherFailures}${[...w.failures].map(([what, n]) => `\n  ${n} x ${what}`).join("")}`,
          );
          console.log(`[faults] how node 1 came back:\n${rejoinLines(spec.nodes[0]!)}`);
          if (w.stalled)
            console.log(
              `[faults] 15 s into a write that had not gone through, the nodes were busy with:\n${w.stalled}`,
            );
          if (w.gaveUp > 0 || w.longestMs > 30_000) console.log(`[faults] the nodes:\n${await clusterState()}`);
          if (w.otherFailures > 0 || w.gaveUp > 0 || w.longestMs > 30_000)
            console.log(`[faults] instance 2's log, last lines:\n${apps[1]!.output().slice(-4000)}`);
          // a surviving node answers every request, with nothing but success or 503 with its error while
          // the cluster notices the lost node, and takes writes again once it has
          expect(w.writes).toBeGreaterThan(0);
          expect(w.gaveUp).toBe(0);
          expect([...w.failures]).toEqual([]);
        },
        midRunSays: `database node 1 killed, restarted and synced again${KILLS > 1 ? `, ${KILLS} times` : ""}`,
      }).finally(() => clearTimeout(watchdog));
    },
  );
});
