import { writeFileSync, mkdirSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { RowDataPacket } from "mysql2";
import { retryDelay } from "@/lib/sync/transport";
import { hashPassword } from "@/server/password";
import { killNode, startNode, stopNode, waitClusterSynced } from "../../scripts/lib/galera.mjs";
import type { Haproxy } from "../../scripts/lib/haproxy.mjs";
import { Client } from "../support/api";
import { clusterSpec } from "../support/cluster";
import { historyRows, rawConnection, readingsDiffering } from "../support/db";
import { ENGINE_FOUR } from "../support/fixtures";
import { behindHaproxy } from "../support/haproxy";
import { giveUp, Phone, RETRIED, retried, sessionCookie, sleep, Stats, table } from "../support/load";
import type { App } from "../support/server";
import { BLADES, CLUB_NIGHT_PASSWORD as PASSWORD, ENGINE_SIX, VALVES } from "../support/club-night";

/**
 * A club night on the cluster, through the one address phones use (HAProxy in front of two app
 * instances; each instance reaches the Galera nodes through HAProxy, its own node first). Mechanics'
 * phones (a tenth sign in first) push a 24-valve check in one burst, then keep measuring and syncing.
 * Meanwhile: app instance 1 is killed (SIGKILL) and started again; database node 2 is stopped cleanly
 * (SIGTERM) and started again; node 1, instance 1's own node, is killed (SIGKILL) and started again.
 * Two steady writers, one straight to each instance, time every write through each event.
 *
 * It fails unless: every phone finishes; nothing a phone wrote is missing or different on the
 * server and nothing was applied twice; no phone met anything but success, 503 or 429 with
 * Retry-After (HAProxy's own errors are 503 with Retry-After too), or a connection cut (the killed
 * instance dies mid-answer: HAProxy cannot replay an answer already begun) that the phone then sent
 * again with success, as the real phone does (Offline: outbox kept, lib/sync/transport.ts); HAProxy
 * takes the killed instance out and back in; instance 1 keeps writing while its own node is down (its
 * connections moved to another node). npm test runs 100 phones; `npm run load -- --cluster` runs 300.
 */
const PHONES = Number(process.env.LASHWRIGHT_LOAD_PHONES ?? 100);
const SIGNING_IN = Math.max(5, Math.round(PHONES * 0.1));
const NODE_DOWN_MS = 12_000;
const MAX_ROUND = 50;

interface Mechanic {
  phone: Phone;
  id: string;
  email: string;
  engineId: string;
  checkId: string;
  round: number;
  written: Map<string, number>;
  signsIn: boolean;
}

const spec = clusterSpec();
const secret = process.env.NEXTAUTH_SECRET!;
const stats = new Stats();
const mechanics: Mechanic[] = [];
const phoneErrors: string[] = [];
const events: string[] = [];
let proxy: Haproxy;
let apps: App[] = [];
const uuid = () => crypto.randomUUID();
const blade = () => BLADES[Math.floor(Math.random() * BLADES.length)]!;
const note = (line: string) => {
  events.push(line);
  console.log(`[club night] ${line}`);
};

beforeAll(async () => {
  ({ proxy, apps } = await behindHaproxy({
    spec,
    name: "haproxy",
    galera: true,
    env: {
      DB_POOL_SIZE: process.env.LASHWRIGHT_LOAD_POOL_SIZE ?? "10",
      // the steady writers are robots that write faster than people
      SYNC_WRITES_PER_MINUTE: "10000000",
    },
  }));

  const hash = await hashPassword(PASSWORD);
  const c = await rawConnection();
  const users = Array.from({ length: PHONES }, (_, i) => ({
    id: uuid(),
    email: `cluster-night-${i}-${uuid().slice(0, 6)}@test.example`,
  }));
  await c.query("INSERT INTO users (id, email, name, password_hash, email_verified_at) VALUES ?", [
    users.map((u, i) => [u.id, u.email, `Mechanic ${i}`, hash, new Date()]),
  ]);
  await c.end();
  for (const [i, u] of users.entries())
    mechanics.push({
      phone: new Phone("mechanic", proxy.url, await sessionCookie(u.id, secret), uuid(), stats),
      ...u,
      engineId: uuid(),
      checkId: uuid(),
      round: 0,
      written: new Map(),
      signsIn: i < SIGNING_IN,
    });
}, 300_000);

afterAll(async () => {
  await Promise.all(apps.map((a) => a.stop()));
  await proxy?.stop();
});

function queueRound(m: Mechanic) {
  for (const valve of VALVES) {
    const feelerGo = blade();
    m.written.set(`${valve}#${m.round}`, feelerGo);
    m.phone.queue("reading.put/1", {
      checkId: m.checkId,
      reading: { valve, round: m.round, feelerGo, method: "feeler" },
    });
  }
}

async function signIn(m: Mechanic) {
  for (let attempt = 0; attempt < 8; attempt++) {
    const t0 = performance.now();
    const c = new Client(proxy.url);
    const error = await c.signIn("password", { email: m.email, password: PASSWORD }).catch((e: unknown) => String(e));
    stats.note("sign-in", performance.now() - t0);
    if (error === null) {
      m.phone.cookie = c.cookieHeader();
      return;
    }
    stats.count("sign-in", `refused: ${error}`);
    await sleep(retryDelay(attempt, 2000));
  }
  throw new Error(`${m.email} could not sign in`);
}

/**
 * Writes one after another straight to one instance, each retried after a 503 as a phone would.
 * `window()` starts a new window and returns the last one's figures: writes done, the longest time
 * one write took to succeed, answers that were 503 and answers that were anything else.
 */
function steadyWriter(app: App, cookie: string) {
  const clientId = uuid();
  const engineId = uuid();
  let running = true;
  const fresh = () => ({ writes: 0, longestMs: 0, busy: 0, other: new Map<string, number>() });
  let w = fresh();
  const done = (async () => {
    for (let id = 1; running; id++) {
      const t0 = performance.now();
      for (;;) {
        const r = await fetch(`${app.url}/api/sync/push`, {
          method: "POST",
          headers: { "content-type": "application/json", cookie, origin: proxy.url },
          body: JSON.stringify({
            clientId,
            mutations: [
              { id, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: `Pause probe ${id}` } },
            ],
          }),
          signal: AbortSignal.timeout(30_000),
        }).then(
          (res) => ({ status: res.status, retryAfter: res.headers.get("retry-after") }),
          (e: Error) => ({ status: 0, retryAfter: e.name }),
        );
        if (r.status === 200) break;
        if (r.status === 503 && r.retryAfter) w.busy++;
        else
          w.other.set(`${r.status} ${r.retryAfter ?? ""}`, (w.other.get(`${r.status} ${r.retryAfter ?? ""}`) ?? 0) + 1);
        await sleep(100);
      }
      w.longestMs = Math.max(w.longestMs, performance.now() - t0);
      w.writes++;
      await sleep(50);
    }
  })();
  return {
    window: () => {
      const last = w;
      w = fresh();
      return last;
    },
    stop: async () => {
      running = false;
      await done;
    },
  };
}

const says = (name: string, w: ReturnType<ReturnType<typeof steadyWriter>["window"]>) =>
  `${name}: ${w.writes} writes, longest ${Math.round(w.longestMs)} ms, 503 ${w.busy}${w.other.size ? `, other ${[...w.other].map(([k, n]) => `${k} x${n}`).join(", ")}` : ""}`;

async function untilState(server: string, want: RegExp, timeoutMs = 60_000) {
  const t0 = performance.now();
  for (;;) {
    const s = (await proxy.servers())[server] ?? "";
    if (want.test(s)) return performance.now() - t0;
    if (performance.now() - t0 > timeoutMs)
      throw new Error(`${server} was not ${want} within ${timeoutMs / 1000} s (${s})`);
    await sleep(100);
  }
}

/** When app instance 1 was killed, and when HAProxy had taken it out (performance.now()). */
let killedAt = NaN;
let outAt = NaN;

/** The events, one after another, while the phones keep working. */
async function faults(writerCookie: string) {
  await sleep(3000);
  // an app instance crashes: HAProxy takes it out, the phones' requests go to the other
  const pid = apps[0]!.pid();
  killedAt = performance.now();
  process.kill(pid, "SIGKILL");
  const outMs = await untilState("app/app1", /^DOWN/);
  outAt = performance.now();
  note(`app instance 1 killed (SIGKILL): HAProxy took it out after ${Math.round(outMs)} ms`);
  await sleep(2000);
  await apps[0]!.restart();
  const backMs = await untilState("app/app1", /^UP/);
  note(`app instance 1 started again: back in HAProxy ${Math.round(backMs)} ms after it answered`);

  const writers = apps.map((a) => steadyWriter(a, writerCookie));
  /** Database node i down for NODE_DOWN_MS and back in HAProxy: the writers' figures while it was down. */
  const nodeDown = async (i: number, how: "stopped (SIGTERM)" | "killed (SIGKILL)") => {
    await sleep(3000);
    writers.forEach((w) => w.window());
    await (how === "stopped (SIGTERM)" ? stopNode(spec, i) : killNode(spec, i));
    await sleep(NODE_DOWN_MS);
    const [a, b] = writers.map((w) => w.window());
    note(
      `database node ${i + 1} ${how}, ${NODE_DOWN_MS / 1000} s down; ${says("through instance 1", a!)}; ${says("through instance 2", b!)}`,
    );
    await startNode(spec, i);
    await waitClusterSynced(spec);
    await untilState(`galera/${spec.nodes[i]!.name}`, /^UP/);
    return [a!, b!] as const;
  };
  // a node leaving cleanly (SIGTERM): it tells the others, so they do not wait for it
  const [cleanA, cleanB] = await nodeDown(1, "stopped (SIGTERM)");
  // instance 1's own node crashes (SIGKILL): the others wait out Galera's suspect timeout, then go on;
  // instance 1's connections move to the next node
  const [killA, killB] = await nodeDown(0, "killed (SIGKILL)");
  note("database node 1 started again and Synced; HAProxy sends instance 1's new connections to it again");
  await Promise.all(writers.map((w) => w.stop()));
  return { cleanA, cleanB, killA, killB };
}

async function compareWithServer(): Promise<string[]> {
  const problems: string[] = [];
  const db = await rawConnection();
  try {
    for (const m of mechanics) {
      const differ = await readingsDiffering(db, m.checkId, m.written);
      if (differ) problems.push(`${m.email}: ${differ} readings differ from the phone's (lost)`);
      if (m.phone.outbox.length) problems.push(`${m.email}: ${m.phone.outbox.length} changes still waiting`);
      const refused = [...m.phone.acknowledged.values()].filter((a) => a.rejected);
      if (refused.length) problems.push(`${m.email}: refused ${refused.map((r) => r.rejected).join("; ")}`);
    }
    const twice = await historyRows(
      mechanics.map((m) => m.checkId),
      db,
    );
    if (twice) problems.push(`${twice} readings were applied twice`);
  } finally {
    await db.end();
  }
  return problems;
}

/** Rows and bytes (data and indexes) per row of the tables a check fills, for the capacity figures. */
async function tableSizes(): Promise<string> {
  const db = await rawConnection();
  try {
    const names = ["readings", "checks", "engines", "owner_versions", "sync_clients"];
    await db.query(`ANALYZE TABLE ${names.join(", ")}`);
    const [rows] = await db.query<RowDataPacket[]>(
      "SELECT table_name AS t, table_rows AS n, data_length AS d, index_length AS i FROM information_schema.tables WHERE table_schema = DATABASE() AND table_name IN (?)",
      [names],
    );
    return rows
      .map((r) => `${r.t} ${r.n} rows, ${Math.round((Number(r.d) + Number(r.i)) / Math.max(1, Number(r.n)))} B/row`)
      .join("; ");
  } catch (e) {
    return `not read (${(e as Error).message})`;
  } finally {
    await db.end();
  }
}

describe(`club night on the cluster: ${PHONES} phones through HAProxy, an app instance and two database nodes lost and back`, () => {
  it("loses nothing, applies nothing twice, answers only success or 503 with Retry-After, and takes every machine back", async () => {
    giveUp.at = performance.now() + 600_000;
    const writer = new Client(proxy.url);
    const [w] = mechanics;
    expect(await writer.signIn("password", { email: w!.email, password: PASSWORD })).toBeNull();

    const t0 = performance.now();
    const settle = async (work: Promise<unknown>[]) => {
      for (const r of await Promise.allSettled(work))
        if (r.status === "rejected") phoneErrors.push(String((r.reason as Error)?.message ?? r.reason));
    };
    await settle(
      mechanics.map(async (m) => {
        if (m.signsIn) await signIn(m);
        m.phone.queue("engine.put/1", { ...ENGINE_SIX, id: m.engineId });
        m.phone.queue("check.put/1", { id: m.checkId, engineId: m.engineId, odometer: 52_300, measuredHot: false });
        queueRound(m);
        await m.phone.sync("burst");
      }),
    );
    const burstMs = performance.now() - t0;

    let running = true;
    const steady = settle(
      mechanics.map(async (m) => {
        while (running) {
          await sleep(2000 + Math.random() * 6000);
          if (!running) return;
          if (m.round < MAX_ROUND) {
            m.round++;
            queueRound(m);
          }
          await m.phone.sync("steady");
        }
      }),
    );
    const f = await faults(writer.cookieHeader()).finally(() => (running = false));
    await steady;
    // instance 1 came back by itself in HAProxy's eyes; both instances and all nodes are up again
    await proxy.waitUp(["app/app1", "app/app2", "galera/n1", "galera/n2", "galera/n3"]);

    const problems = phoneErrors.length ? [] : await compareWithServer();
    const sizes = await tableSizes();
    const answers = stats.counted();
    const report = [
      `club night on the cluster: ${PHONES} phones through HAProxy (${SIGNING_IN} sign in first), two app instances, three Galera nodes`,
      `burst: every phone's first sync done in ${(burstMs / 1000).toFixed(1)} s`,
      table([
        { kind: "sign-in (burst)", http: stats.summary("sign-in") },
        ...["burst", "steady"].flatMap((phase) => [
          {
            kind: `push (${phase})`,
            http: stats.summary(`push (${phase})`),
            notes: `503 retried ${stats.get(`push (${phase})`, RETRIED.busy)}, cut and sent again ${stats.get(`push (${phase})`, RETRIED.cut)}`,
          },
          {
            kind: `pull (${phase})`,
            http: stats.summary(`pull (${phase})`),
            notes: `503 retried ${stats.get(`pull (${phase})`, RETRIED.busy)}, cut and sent again ${stats.get(`pull (${phase})`, RETRIED.cut)}`,
          },
          { kind: `whole sync (${phase})`, http: stats.summary(`whole sync (${phase})`) },
        ]),
      ]),
      ...events,
      `answers other than 2xx: ${answers.length ? answers.join("; ") : "none"}`,
      `connections cut and sent again with success: ${stats.total(RETRIED.cut)}`,
      `phones that did not finish: ${phoneErrors.length}${phoneErrors.length ? ` (first: ${phoneErrors[0]})` : ""}`,
      `lost or applied twice: ${problems.length ? problems.slice(0, 5).join("; ") : "none"}`,
      `stored (for README Scaling): ${sizes}`,
    ].join("\n");
    console.log(`\n${report}\n`);
    // an answer that was neither success nor 503 names its cause here: the instances' errors, HAProxy's alerts
    if (answers.some((a) => /server error|connection cut|unanswered/.test(a))) {
      for (const [i, a] of apps.entries())
        console.log(
          `[club night] instance ${i + 1}, error lines:\n${a
            .output()
            .split("\n")
            .filter((l) => /error|Error|ER_|500|failed/.test(l))
            .slice(-40)
            .join("\n")}`,
        );
      console.log(`[club night] HAProxy:\n${proxy.output().slice(-3000)}`);
    }
    mkdirSync(path.resolve(__dirname, "../../test-results"), { recursive: true });
    writeFileSync(path.resolve(__dirname, "../../test-results/cluster-load.txt"), report + "\n");

    // The strict check. Every phone finished: each request it retried ended in a success (Phone.post
    // sends again until it does, or throws). Nothing lost, nothing applied twice. And no answer other
    // than success, 503 or 429 with Retry-After, or a cut connection (sent again, as just said):
    // HAProxy's own errors are 503 with Retry-After too. Sign-in refusals happen in the burst, before
    // any fault, and are printed above.
    expect(phoneErrors).toEqual([]);
    expect(problems).toEqual([]);
    expect(answers.filter((a) => !retried(a) && !/^sign-in: refused: /.test(a))).toEqual([]);
    // a cut connection only for requests instance 1 was answering when it was killed, none after
    // HAProxy had taken it out (figures: ms after the kill)
    expect(
      stats.unanswered.filter((t) => t < killedAt || t > outAt + 1000).map((t) => Math.round(t - killedAt)),
    ).toEqual([]);
    // instance 1 kept writing while its own node was down: its connections moved to another node
    expect(f.killA.writes).toBeGreaterThan(0);
    expect(f.cleanA.writes).toBeGreaterThan(0);
    expect(f.cleanB.writes).toBeGreaterThan(0);
    expect(f.killB.writes).toBeGreaterThan(0);
    // the writers' answers other than success or 503 are printed above, not yet failed on (issue 30:
    // the faults test waits for runs that show none); the phones' answers above are strict
  }, 1_200_000);
});
