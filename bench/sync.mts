// Sync throughput: 10,000 reading mutations through the real push route (production server, real
// MariaDB) in the client's batch size, beside the same rows written by a raw mysql2 multi-row
// insert in the same run; and a full pull of a user with 50 engines, 500 checks, 8,000 readings.
import { parseArgs } from "node:util";
import mysql from "mysql2/promise";
import { startBenchServer, type BenchServer } from "./server.mts";
import { Client } from "../tests/support/api";
import { ENGINE_FOUR } from "../tests/fixtures/engines";
import { PUSH_BATCH } from "../lib/sync/mutations";
import { say } from "./progress.mts";

const ENGINE = { ...ENGINE_FOUR, name: "Bench four" };
const VALVES = [
  "I1.1",
  "I1.2",
  "E1.1",
  "E1.2",
  "I2.1",
  "I2.2",
  "E2.1",
  "E2.2",
  "I3.1",
  "I3.2",
  "E3.1",
  "E3.2",
  "I4.1",
  "I4.2",
  "E4.1",
  "E4.2",
];

/** Readings for n mutations: 16 valves x 50 rounds per check, as many checks as it takes. */
function readingPlan(n: number) {
  const perCheck = VALVES.length * 50;
  const checks = Math.ceil(n / perCheck);
  const checkIds = Array.from({ length: checks }, () => crypto.randomUUID());
  const rows = Array.from({ length: n }, (_, i) => ({
    checkId: checkIds[Math.floor(i / perCheck)]!,
    valve: VALVES[i % VALVES.length]!,
    round: Math.floor((i % perCheck) / VALVES.length),
    go: 0.1 + (i % 20) / 100,
  }));
  return { checkIds, rows };
}

function pushPhases(phases: Map<string, number>, roundTrips: number, pushes: number) {
  const server = [...phases.values()].reduce((a, b) => a + b, 0);
  return [
    ...[...phases].map(([name, ms]) => ({ name, ms: ms / pushes })),
    { name: "outside the handler (HTTP, Next, transfer)", ms: (roundTrips - server) / pushes },
    { name: "round trip", ms: roundTrips / pushes },
  ];
}

export async function runSyncBench(srv: BenchServer, n = 10_000) {
  const { url } = srv;
  // push through the route
  const u = await srv.makeUser("pusher");
  const client = new Client(url);
  if ((await client.signIn("password", { email: u.email, password: u.password })) !== null)
    throw new Error("bench sign-in failed");
  const engineId = crypto.randomUUID();
  const { checkIds, rows } = readingPlan(n);
  const clientId = crypto.randomUUID();
  let id = 0;
  const setup = [
    { id: ++id, name: "engine.put/1", args: { ...ENGINE, id: engineId } },
    ...checkIds.map((c) => ({ id: ++id, name: "check.put/1", args: { id: c, engineId, odometer: 1000 } })),
  ];
  await client.post("/api/sync/push", { clientId, mutations: setup });
  const mutations = rows.map((r) => ({
    id: ++id,
    name: "reading.put/1",
    args: {
      checkId: r.checkId,
      reading: { valve: r.valve, round: r.round, installedStamp: 2.6, feelerGo: r.go, method: "feeler" },
    },
  }));
  // the same rows by raw multi-row INSERT, same batch size, on a connection of their own; each raw
  // batch goes right after the push of the same size, so both share the machine's load of the moment
  const raw = await mysql.createConnection({ uri: srv.dbUrl });
  const rawEngine = crypto.randomUUID();
  await raw.query(
    "INSERT INTO engines (id, owner_id, name, cylinders, intake_per_cylinder, exhaust_per_cylinder, firing_order, intake_min, intake_max, exhaust_min, exhaust_max, shim_min, shim_max, shim_step) VALUES (?, ?, 'raw', 4, 2, 2, '[1,3,4,2]', 0.1, 0.2, 0.2, 0.3, 2.5, 3.3, 0.05)",
    [rawEngine, u.id],
  );
  const rawPlan = readingPlan(n);
  for (const c of rawPlan.checkIds)
    await raw.query("INSERT INTO checks (id, engine_id, owner_id, odometer) VALUES (?, ?, ?, 1000)", [
      c,
      rawEngine,
      u.id,
    ]);
  // where each push's milliseconds go: the server's Server-Timing phases (server/timing.ts), summed
  // over the pushes; what the server does not see (the socket, HTTP parsing, Next's routing, the
  // answer's transfer) is the rest of the round trip the bench measures here
  const phases = new Map<string, number>();
  let pushMs = 0;
  let rawMs = 0;
  for (let i = 0; i < mutations.length; i += PUSH_BATCH) {
    const r0 = performance.now();
    const res = await client.raw("POST", "/api/sync/push", {
      body: JSON.stringify({ clientId, mutations: mutations.slice(i, i + PUSH_BATCH) }),
      headers: { "content-type": "application/json" },
    });
    const json = (await res.json()) as { rejected: unknown[] };
    pushMs += performance.now() - r0;
    for (const entry of (res.headers.get("server-timing") ?? "").split(",")) {
      const m = /^\s*([^;]+);dur=([\d.]+)/.exec(entry);
      if (m) phases.set(m[1]!, (phases.get(m[1]!) ?? 0) + Number(m[2]));
    }
    if (res.status !== 200 || json.rejected.length)
      throw new Error(`push failed: ${res.status} ${JSON.stringify(json).slice(0, 200)}`);
    const batch = rawPlan.rows.slice(i, i + PUSH_BATCH);
    const t1 = performance.now();
    await raw.query(
      "INSERT INTO readings (id, check_id, owner_id, valve, round, installed_stamp, feeler_go, measured, method) VALUES ?",
      [batch.map((r) => [crypto.randomUUID(), r.checkId, u.id, r.valve, r.round, 2.6, r.go, r.go, "feeler"])],
    );
    rawMs += performance.now() - t1;
    const sent = i + PUSH_BATCH;
    if (sent % 2000 === 0)
      say(
        `  pushed ${sent.toLocaleString("en")} of ${mutations.length.toLocaleString("en")} readings (and as many raw)`,
      );
  }
  const [[count]] = (await raw.query("SELECT COUNT(*) AS n FROM readings WHERE owner_id = ?", [u.id])) as unknown as [
    [{ n: number }],
  ];

  // a full pull: 50 engines, 500 checks, 8,000 readings of another user, inserted directly
  say("  a full pull of 50 engines, 500 checks, 8,000 readings");
  const p = await srv.makeUser("puller");
  const engines = Array.from({ length: 50 }, () => crypto.randomUUID());
  await raw.query(
    "INSERT INTO engines (id, owner_id, name, cylinders, intake_per_cylinder, exhaust_per_cylinder, firing_order, intake_min, intake_max, exhaust_min, exhaust_max, shim_min, shim_max, shim_step, version) VALUES ?",
    [engines.map((e, i) => [e, p.id, `Engine ${i}`, 4, 2, 2, "[1,3,4,2]", 0.1, 0.2, 0.2, 0.3, 2.5, 3.3, 0.05, 1])],
  );
  const checks = engines.flatMap((e) => Array.from({ length: 10 }, () => [crypto.randomUUID(), e]));
  await raw.query("INSERT INTO checks (id, engine_id, owner_id, odometer, version) VALUES ?", [
    checks.map(([c, e]) => [c, e, p.id, 1000, 1]),
  ]);
  const readingRows = checks.flatMap(([c]) =>
    VALVES.map((v) => [crypto.randomUUID(), c, p.id, v, 0, 2.6, 0.15, 0.15, "feeler", 1]),
  );
  for (let i = 0; i < readingRows.length; i += 2000)
    await raw.query(
      "INSERT INTO readings (id, check_id, owner_id, valve, round, installed_stamp, feeler_go, measured, method, version) VALUES ?",
      [readingRows.slice(i, i + 2000)],
    );
  // the rows carry version 1 of the puller's own change counter (db/versions.ts)
  await raw.query("INSERT INTO owner_versions (owner_id, version) VALUES (?, 1)", [p.id]);
  await raw.end();
  const puller = new Client(url);
  await puller.signIn("password", { email: p.email, password: p.password });
  const t2 = performance.now();
  // page after page, as the phone does
  const pulled = { readings: [] as unknown[], checks: [] as unknown[], engines: [] as unknown[] };
  let bytes = 0;
  let pages = 0;
  for (let cursor: string | null = null, more = true; more; pages++) {
    const res = await puller.raw("POST", "/api/sync/pull", {
      body: JSON.stringify({ cursor }),
      headers: { "content-type": "application/json" },
    });
    const text = await res.text();
    bytes += Buffer.byteLength(text);
    const page = JSON.parse(text) as {
      cursor: string;
      more?: boolean;
      readings: unknown[];
      checks: unknown[];
      engines: unknown[];
    };
    pulled.readings.push(...page.readings);
    pulled.checks.push(...page.checks);
    pulled.engines.push(...page.engines);
    ({ cursor } = page);
    more = page.more === true;
  }
  const pullMs = performance.now() - t2;
  return {
    mutations: n,
    batch: PUSH_BATCH,
    rowsStored: Number(count.n),
    pushRowsPerSec: (n / pushMs) * 1000,
    rawRowsPerSec: (n / rawMs) * 1000,
    ratio: rawMs / pushMs,
    rawMsPerBatch: rawMs / (n / PUSH_BATCH),
    /** milliseconds per push of PUSH_BATCH readings, by phase, in the order the server ends them */
    pushPhases: pushPhases(phases, pushMs, n / PUSH_BATCH),
    pull: {
      ms: pullMs,
      pages,
      bytes,
      engines: pulled.engines.length,
      checks: pulled.checks.length,
      readings: pulled.readings.length,
    },
  };
}

// `node --conditions=react-server --import tsx bench/sync.mts [--before DIST] [--rounds N]`: this
// stage alone, printed as JSON; with --before, a second build (made with LASHWRIGHT_DIST_DIR=DIST)
// is served too and the two are pushed to in turn, N rounds each (2), with the phases side by side
if (import.meta.url === `file://${process.argv[1]}`) {
  const { values } = parseArgs({ options: { before: { type: "string" }, rounds: { type: "string" } } });
  if (!values.before) {
    const srv = await startBenchServer();
    try {
      console.log(JSON.stringify(await runSyncBench(srv), null, 2));
    } finally {
      await srv.stop();
    }
  } else {
    const builds = [
      { name: "before", srv: await startBenchServer({ distDir: values.before }) },
      { name: "after", srv: await startBenchServer() },
    ];
    const runs: Record<string, Awaited<ReturnType<typeof runSyncBench>>[]> = { before: [], after: [] };
    try {
      for (let round = 1; round <= Number(values.rounds ?? 2); round++)
        for (const b of builds) {
          say(`round ${round}: ${b.name}`);
          const r = await runSyncBench(b.srv);
          runs[b.name]!.push(r);
          say(
            `  ratio ${r.ratio.toFixed(3)} (push ${Math.round(r.pushRowsPerSec)} rows/s, raw ${Math.round(r.rawRowsPerSec)})`,
          );
        }
    } finally {
      for (const b of builds) await b.srv.stop();
    }
    // per push, averaged over the rounds
    const mean = (xs: number[]) => xs.reduce((x, y) => x + y, 0) / xs.length;
    const names = [...new Set(Object.values(runs).flatMap((rs) => rs.flatMap((r) => r.pushPhases.map((p) => p.name))))];
    const cell = (b: string, name: string) =>
      mean(runs[b]!.map((r) => r.pushPhases.find((p) => p.name === name)?.ms ?? 0))
        .toFixed(2)
        .padStart(8);
    console.log(`${"phase (ms per push of 200)".padEnd(44)}   before    after`);
    for (const name of names) console.log(`${name.padEnd(44)} ${cell("before", name)} ${cell("after", name)}`);
    for (const b of ["before", "after"])
      console.log(
        `${b}: ratio ${runs[b]!.map((r) => r.ratio.toFixed(3)).join(", ")}; raw INSERT ${mean(runs[b]!.map((r) => r.rawMsPerBatch)).toFixed(2)} ms a batch`,
      );
  }
}
