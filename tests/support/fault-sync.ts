import { IDBFactory, IDBKeyRange } from "fake-indexeddb";
import { expect } from "vitest";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { uniformInt } from "pure-rand/distribution/uniformInt";
import { openLocalDb, getMeta, type LocalDb } from "@/lib/sync/local-db";
import { syncOnce } from "@/lib/sync/phone-sync";
import { addComment, saveCheck, saveEngine, saveReading, saveTrayItem } from "@/lib/sync/save";
import type { MutationArgs } from "@/lib/sync/mutations";
import { historyRows, rawConnection } from "./db";
import { ENGINE_FOUR } from "./fixtures";
import type { FaultProxy } from "./fault-proxy";

/**
 * Sync under faults: two phones of one user push through proxies that reset, drop answers after
 * the commit, duplicate, replay late and delay, while something breaks once in the middle (the
 * caller's midRun: a server restart, a database node killed). Phone A writes every reading once
 * (so any second application shows in reading_history), phone B overwrites a few readings, tray
 * rows and its engine's name again and again (so a stale replay applied late would leave an old
 * value). Afterwards the server must hold exactly what the phones hold.
 */
export interface Run {
  user: { id: string };
  /** the signed-in session's cookie header */
  cookie: string;
  total: number;
  seed: number;
  /** phone A syncs through the first, phone B through the second (the same proxy twice on one server) */
  bases: [string, string];
  proxies: FaultProxy[];
  /** started when phone A is half done, not waited for */
  midRun: () => Promise<void>;
  /** what midRun does, for the printed summary */
  midRunSays: string;
}

const VALVES = ["I", "E"].flatMap((k) => [1, 2, 3, 4].flatMap((c) => [1, 2].map((i) => `${k}${c}.${i}`)));
const BLADES = [0.05, 0.08, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33];

interface Phone {
  name: string;
  /** where this phone's syncs go (a fault proxy in front of one app instance) */
  base: string;
  run: Run;
  db: LocalDb;
  engineId: string;
  checkId: string;
  /** phone A moves to a new check when one is full (16 valves x 50 rounds) */
  checkIds: string[];
  readings: number;
  trayIds: string[];
  commentIds: string[];
  written: number;
  syncErrors: number;
}

function phone(run: Run, name: string, base: string): Phone {
  // each phone its own IndexedDB (fake-indexeddb), as two browsers would have
  const db = openLocalDb(`${run.user.id}-${name}`, new IDBFactory(), IDBKeyRange);
  const checkId = crypto.randomUUID();
  return {
    name,
    base,
    run,
    db,
    engineId: crypto.randomUUID(),
    checkId,
    checkIds: [checkId],
    readings: 0,
    trayIds: [],
    commentIds: [],
    written: 0,
    syncErrors: 0,
  };
}

async function trySync(p: Phone) {
  // the app's own pages send Sec-Fetch-Site: same-origin, as a browser does
  const fetcher = (url: string, init: RequestInit) =>
    fetch(url, {
      ...init,
      headers: { ...(init.headers as Record<string, string>), cookie: p.run.cookie, "sec-fetch-site": "same-origin" },
    });
  try {
    await syncOnce(p.db, fetcher, p.base);
  } catch {
    p.syncErrors++;
  }
}

function reading(valve: string, round: number, i: number) {
  const go = BLADES[i % (BLADES.length - 1)]!;
  return {
    valve,
    round,
    installedStamp: Math.round((2.5 + (i % 16) * 0.05) * 100) / 100,
    installedMicrometer: null,
    feelerGo: go,
    feelerNoGo: BLADES[(i % (BLADES.length - 1)) + 1]!,
    measured: go,
    method: "feeler" as const,
    fittedShim: null,
  };
}

/** Phone A: each (valve, round) once, and comments. */
async function writeA(p: Phone, i: number) {
  if (i % 10 === 9) {
    const id = crypto.randomUUID();
    p.commentIds.push(id);
    return addComment(p.db, {
      id,
      checkId: p.checkId,
      authorId: p.run.user.id,
      body: `note ${i} <b>&'"; DROP TABLE comments;--`,
      valve: VALVES[i % 16]!,
    });
  }
  const k = p.readings++;
  const per = VALVES.length * 50;
  if (k > 0 && k % per === 0) {
    p.checkIds.push(crypto.randomUUID());
    await saveCheck(p.db, { id: p.checkIds.at(-1)!, engineId: p.engineId, odometer: 1000 + k, measuredHot: false });
  }
  return saveReading(p.db, p.checkIds.at(-1)!, reading(VALVES[k % 16]!, Math.floor((k % per) / 16), i));
}

/** Phone B: the same few records over and over. */
async function writeB(p: Phone, i: number, rng: ReturnType<typeof xoroshiro128plus>) {
  const r = uniformInt(rng, 0, 9);
  if (r < 6)
    return saveReading(
      p.db,
      p.checkId,
      reading(VALVES[uniformInt(rng, 0, 15)]!, uniformInt(rng, 0, 4), uniformInt(rng, 0, 1000)),
    );
  if (r < 9)
    return saveTrayItem(p.db, {
      id: p.trayIds[uniformInt(rng, 0, p.trayIds.length - 1)]!,
      size: 2.6,
      measuredSize: false,
      count: uniformInt(rng, 0, 40),
    });
  return saveEngine(p.db, {
    ...ENGINE_FOUR,
    id: p.engineId,
    name: `B engine rev ${i}`,
  } as MutationArgs<"engine.put/1">);
}

async function setUpPhone(p: Phone) {
  await saveEngine(p.db, { ...ENGINE_FOUR, id: p.engineId, name: `${p.name} engine` } as MutationArgs<"engine.put/1">);
  await saveCheck(p.db, { id: p.checkId, engineId: p.engineId, odometer: 1000, measuredHot: false });
  for (let t = 0; t < 3; t++) {
    const id = crypto.randomUUID();
    p.trayIds.push(id);
    await saveTrayItem(p.db, { id, size: 2.6 + t * 0.05, measuredSize: false, count: 1 });
  }
  p.written += 5;
}

async function write(p: Phone, share: number, rng: ReturnType<typeof xoroshiro128plus>, atHalf?: () => Promise<void>) {
  await setUpPhone(p);
  let i = 0;
  let halfDone = false;
  while (p.written < share) {
    const burst = Math.min(uniformInt(rng, 1, 60), share - p.written);
    for (let j = 0; j < burst; j++, i++, p.written++) await (p.name === "A" ? writeA(p, i) : writeB(p, i, rng));
    await trySync(p);
    if (atHalf && !halfDone && p.written >= share / 2) {
      halfDone = true;
      await atHalf();
    }
  }
}

/** Run both phones to the end and check the server against them (vitest expectations). */
export async function runFaultSync(run: Run) {
  const a = phone(run, "A", run.bases[0]);
  const b = phone(run, "B", run.bases[1]);
  const t0 = Date.now();
  // the outage is not waited for: both phones keep writing and syncing into it
  let outage: Promise<void> | undefined;
  await Promise.all([
    write(a, run.total / 2, xoroshiro128plus(run.seed + 1), async () => {
      const t = Date.now();
      outage = run
        .midRun()
        .then(() =>
          console.log(`[faults] ${run.midRunSays} at ${Math.round((t - t0) / 100) / 10} s, for ${Date.now() - t} ms`),
        );
    }),
    write(b, run.total / 2, xoroshiro128plus(run.seed + 2)),
  ]);
  expect(outage).toBeDefined();
  await outage;
  // keep syncing (still through the faults) until both outboxes are empty
  for (let round = 0; round < 200 && ((await a.db.outbox.count()) || (await b.db.outbox.count())); round++)
    await Promise.all([trySync(a), trySync(b)]);
  await Promise.all(run.proxies.map((p) => p.settle()));
  // one calm pass so each phone has pulled the last of its own changes back
  for (const p of run.proxies) p.calm();
  await Promise.all([trySync(a), trySync(b)]);
  expect(await a.db.outbox.count()).toBe(0);
  expect(await b.db.outbox.count()).toBe(0);

  const db = await rawConnection();
  // on a cluster, read only once this node has applied every commit made anywhere before
  await db.query("SET SESSION wsrep_sync_wait = 1");
  const q = async <T>(sql: string, args: unknown[]) => (await db.query(sql, args))[0] as T[];
  for (const p of [a, b]) {
    const local = (await p.db.readings.where("checkId").anyOf(p.checkIds).toArray())
      .map((r) => [r.checkId, r.valve, r.round, r.installedStamp, r.feelerGo, r.feelerNoGo].join(" "))
      .sort();
    const server = (
      await q<{
        check_id: string;
        valve: string;
        round: number;
        installed_stamp: string;
        feeler_go: string;
        feeler_no_go: string;
      }>(
        "SELECT check_id, valve, round, installed_stamp, feeler_go, feeler_no_go FROM readings WHERE check_id IN (?)",
        [p.checkIds],
      )
    )
      .map((r) =>
        [r.check_id, r.valve, r.round, Number(r.installed_stamp), Number(r.feeler_go), Number(r.feeler_no_go)].join(
          " ",
        ),
      )
      .sort();
    expect(server.length, `${p.name}: reading count`).toBe(local.length);
    expect(server, `${p.name}: readings`).toEqual(local);
    const localTray = (await p.db.tray.bulkGet(p.trayIds))
      .map((t) => t!)
      .map((t) => [t.id, t.count])
      .sort();
    const serverTray = (
      await q<{ id: string; count: number }>("SELECT id, count FROM tray_items WHERE owner_id = ? AND id IN (?)", [
        run.user.id,
        p.trayIds,
      ])
    )
      .map((t) => [t.id, t.count])
      .sort();
    expect(serverTray, `${p.name}: tray`).toEqual(localTray);
    const [engine] = await q<{ name: string }>("SELECT name FROM engines WHERE id = ?", [p.engineId]);
    expect(engine?.name, `${p.name}: engine`).toBe((await p.db.engines.get(p.engineId))?.name);
    const clientId = await getMeta<string>(p.db, "clientId");
    const [sc] = await q<{ last_mutation_id: number }>("SELECT last_mutation_id FROM sync_clients WHERE id = ?", [
      clientId,
    ]);
    expect(sc?.last_mutation_id, `${p.name}: last applied id`).toBe(
      ((await getMeta<number>(p.db, "nextMutationId")) ?? 1) - 1,
    );
    const refused = await q<{ mutation_id: number; name: string; reason: string }>(
      "SELECT mutation_id, name, reason FROM rejected_mutations WHERE client_id = ?",
      [clientId],
    );
    expect(refused, `${p.name}: refused`).toEqual([]);
  }
  // phone A wrote each reading once: a second application would have put its first value in history
  expect(await historyRows(a.checkIds, db)).toBe(0);
  const comments = (
    await q<{ id: string; body: string }>("SELECT id, body FROM comments WHERE check_id = ?", [a.checkId])
  )
    .map((c) => c.id)
    .sort();
  expect(comments).toEqual([...a.commentIds].sort());
  await db.end();
  const readingsA = a.readings;
  const counts: Partial<Record<string, number>> = {};
  for (const p of run.proxies) for (const [k, v] of Object.entries(p.counts)) counts[k] = (counts[k] ?? 0) + v;
  console.log(
    `[faults] ${a.written + b.written} mutations (${readingsA} readings written once, ${a.commentIds.length} comments, the rest overwrites) in ${Math.round((Date.now() - t0) / 1000)} s; ` +
      `proxy: ${Object.entries(counts)
        .map(([k, v]) => `${k} ${v}`)
        .join(
          ", ",
        )}; failed syncs retried: A ${a.syncErrors}, B ${b.syncErrors}; ${run.midRunSays} once; lost 0, applied twice 0`,
  );
  expect(counts["drop-answer"]).toBeGreaterThan(0);
  expect(counts["late-replay"]).toBeGreaterThan(0);
  expect(counts.reset).toBeGreaterThan(0);
}
