import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { drizzle } from "drizzle-orm/mysql2";
import mysql from "mysql2/promise";
import * as schema from "@/db/schema";
import { closeDb } from "@/db/connection";
import { versioned } from "@/db/versions";
import { putCheck, putEngine, putTrayItem, writeReadings } from "@/db/queries/garage";
import { changesSince } from "@/db/queries/sync";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { testDbUrl } from "../../support/db";
import type { EngineInput } from "@/lib/schemas/records";

/**
 * What a pull costs, counted in the server's own handler calls (SHOW SESSION STATUS
 * Handler_read_*), not timed: a pull of one owner's changes must not read other owners' rows.
 * The million other rows live in session copies of the tables (CREATE TEMPORARY TABLE ... LIKE,
 * the same columns and indexes, shadowing the real table for this connection only), so they cost
 * no clean-up and no other test sees them.
 */
const OTHERS = 1_000_000;

let conn: mysql.Connection;
let owner: string;
let counter = 0;

const pullIn = (after: number | null) =>
  drizzle(conn, { schema, mode: "default" }).transaction((tx) => changesSince(tx, owner, after), {
    isolationLevel: "repeatable read",
    accessMode: "read only",
  });

async function handlerReads(): Promise<Record<string, number>> {
  const [rows] = await conn.query("SHOW SESSION STATUS LIKE 'Handler_read%'");
  return Object.fromEntries(
    (rows as { Variable_name: string; Value: string }[]).map((r) => [r.Variable_name, Number(r.Value)]),
  );
}

/** Handler reads of one pull, less those of the SHOW STATUS that measures them. */
async function cost(after: number | null) {
  const a = await handlerReads();
  const b = await handlerReads();
  const result = await pullIn(after);
  const c = await handlerReads();
  const reads = Object.fromEntries(
    Object.keys(a).map((k) => [k.replace("Handler_read_", ""), c[k]! - b[k]! - (b[k]! - a[k]!)]),
  );
  return { reads, result, total: Object.values(reads).reduce((s, n) => s + n, 0) };
}

beforeAll(async () => {
  owner = (await makeUser("pull-cost")).id;
  const [engineId, checkId] = [crypto.randomUUID(), crypto.randomUUID()];
  // four writes of the owner's, each its own transaction and version
  await versioned(owner, (tx, v) => putEngine(tx, owner, v, engineId, ENGINE_FOUR as EngineInput));
  await versioned(owner, (tx, v) =>
    putCheck(tx, owner, v, checkId, engineId, { odometer: 1000, measuredHot: false, status: "measuring" }),
  );
  await versioned(owner, (tx, v) =>
    writeReadings(
      tx,
      owner,
      v,
      checkId,
      ["I1.1", "I1.2", "E1.1", "E1.2"].map((valve) => ({
        valve,
        round: 0,
        installedStamp: 2.6,
        feelerGo: 0.15,
        feelerNoGo: 0.18,
        method: "feeler" as const,
      })),
    ),
  );
  await versioned(owner, (tx, v) =>
    putTrayItem(tx, owner, v, crypto.randomUUID(), { size: 2.6, measuredSize: false, count: 2 }),
  );
  conn = await mysql.createConnection({ uri: testDbUrl(), supportBigNumbers: true, timezone: "Z" });
  counter = (await pullIn(null)).upTo;
}, 120_000);
afterAll(async () => {
  await conn?.end();
  await closeDb();
});

describe("the cost of a pull follows the owner's own rows", () => {
  it(
    `a pull with nothing new is one primary-key read, and stays so beside ${OTHERS.toLocaleString("en")} other owners' version rows`,
    { timeout: 300_000 },
    async () => {
      expect(counter).toBe(4);
      const idleBefore = await cost(counter);
      const oneBefore = await cost(counter - 1);
      const fullBefore = await cost(null);
      expect(idleBefore.result.engines).toEqual([]);
      expect(oneBefore.result.tray).toHaveLength(1);
      expect(fullBefore.result.readings).toHaveLength(4);

      // a million other owners' counters and a million of their tombstones, beside this owner's rows
      for (const table of ["owner_versions", "tombstones"]) {
        await conn.query(`CREATE TEMPORARY TABLE shadow LIKE ${table}`);
        await conn.query(`INSERT INTO shadow SELECT * FROM ${table} WHERE owner_id = ?`, [owner]);
        await conn.query(`ALTER TABLE shadow RENAME TO ${table}`);
      }
      await conn.query(
        `INSERT INTO owner_versions (owner_id, version) SELECT CONCAT('other-', LPAD(seq, 30, '0')), seq FROM seq_1_to_${OTHERS}`,
      );
      await conn.query(
        `INSERT INTO tombstones (id, entity, entity_id, owner_id, version) SELECT CONCAT('t-', LPAD(seq, 34, '0')), 'tray_item', LPAD(seq, 36, '0'), CONCAT('other-', LPAD(seq DIV 1000, 30, '0')), seq MOD 1000 + 1 FROM seq_0_to_${OTHERS - 1}`,
      );
      const [[n]] = (await conn.query(
        "SELECT (SELECT COUNT(*) FROM owner_versions) AS owners, (SELECT COUNT(*) FROM tombstones) AS tombstones",
      )) as unknown as [[{ owners: number; tombstones: number }]];
      expect(Number(n.owners)).toBeGreaterThanOrEqual(OTHERS);
      expect(Number(n.tombstones)).toBeGreaterThanOrEqual(OTHERS);

      const idle = await cost(counter);
      console.log(
        `[pull-cost] handler reads, nothing new: ${JSON.stringify(idle.reads)}; one change: ${JSON.stringify((await cost(counter - 1)).reads)}; full: ${JSON.stringify((await cost(null)).reads)}`,
      );
      // nothing new: the owner's counter by its primary key, and no row scanned
      expect(idle.reads.key).toBe(1);
      expect(idle.total).toBeLessThanOrEqual(2);
      expect(idle.reads.rnd_next).toBe(0);
      expect(idle.reads).toEqual(idleBefore.reads);
      // with changes, none of the million rows is read: a pull that scanned them would count about a
      // million reads. Not "the same reads as before": the owner's rows sit in tables the other test
      // files fill at the same time, and by their statistics of the moment the optimizer reads those
      // small tables by key or scans them (seen: 8 reads one run, 1,596 another, the same pull)
      const one = await cost(counter - 1);
      const full = await cost(null);
      expect(one.result.tray).toHaveLength(1);
      expect(full.result.readings).toHaveLength(4);
      for (const c of [one, full]) expect(c.total).toBeLessThan(OTHERS / 100);
    },
  );
});
