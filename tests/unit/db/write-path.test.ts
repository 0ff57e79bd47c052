import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { getTableName, is } from "drizzle-orm";
import { MySqlTable } from "drizzle-orm/mysql-core";
import { drizzle } from "drizzle-orm/mysql2";
import * as schema from "@/db/schema";

/**
 * db/write-path.ts: which statements change which tables, the two lists of tables, and the marks.
 * The check against the database (a write refused outside the write path) is
 * tests/integration/db/write-path.test.ts.
 */
type WritePath = typeof import("@/db/write-path");
let on: WritePath;
let off: WritePath;
beforeAll(async () => {
  vi.resetModules();
  vi.stubEnv("LASHWRIGHT_CHECK_WRITES", "1");
  on = await import("@/db/write-path");
  vi.resetModules();
  vi.stubEnv("LASHWRIGHT_CHECK_WRITES", "");
  off = await import("@/db/write-path");
});
afterAll(() => {
  vi.unstubAllEnvs();
});

const tables = Object.values(schema).filter((t) => is(t, MySqlTable)) as MySqlTable[];
const d = drizzle.mock({ schema, mode: "default" });

describe("the tables the write path guards", () => {
  it("every table of db/schema.ts is in exactly one list, and each list names only tables there are", async () => {
    const { INFRASTRUCTURE_TABLES, RECORD_TABLES } = await import("@/db/write-path");
    const names = tables.map((t) => getTableName(t)).sort();
    const records = new Set<string>(RECORD_TABLES);
    expect(names.filter((n) => records.has(n) === INFRASTRUCTURE_TABLES.has(n))).toEqual([]);
    // the migrator's own table is the one not declared in the schema
    expect([...records, ...INFRASTRUCTURE_TABLES.keys()].filter((n) => !names.includes(n))).toEqual([
      "__drizzle_migrations",
    ]);
  });

  it("drizzle's insert, update and delete of each table are seen as changing that table", () => {
    for (const t of tables) {
      const [key] = Object.keys(t) as (keyof typeof t)[];
      const name = getTableName(t);
      const insert = d
        .insert(t)
        .values({ [key!]: null } as never)
        .toSQL().sql;
      const update = d
        .update(t)
        .set({ [key!]: null } as never)
        .toSQL().sql;
      expect(on.tablesChanged(insert), insert).toEqual([name]);
      expect(on.tablesChanged(update), update).toEqual([name]);
      expect(on.tablesChanged(d.delete(t).toSQL().sql)).toEqual([name]);
    }
  });

  it("raw statements: upserts, multi-table changes, comments and any case; reads and transactions change nothing", () => {
    const { tablesChanged } = on;
    expect(tablesChanged("INSERT INTO owner_versions (owner_id, version) VALUES (?, 1)")).toEqual(["owner_versions"]);
    expect(tablesChanged("\n  insert ignore into `lashwright`.`readings` (`id`) values ('a')")).toEqual(["readings"]);
    expect(tablesChanged("REPLACE engines SET name = 'x'")).toEqual(["engines"]);
    expect(tablesChanged("/* why */ -- and\n UPDATE notices SET status = 'sending' WHERE id IN (SELECT 1)")).toEqual([
      "notices",
    ]);
    expect(tablesChanged("update engines e join checks c on c.engine_id = e.id set e.name = c.notes")).toEqual([
      "engines",
      "checks",
    ]);
    expect(tablesChanged("DELETE FROM uploads WHERE check_id IN (SELECT id FROM checks)")).toEqual(["uploads"]);
    expect(tablesChanged("delete from notices, uploads using notices join uploads")).toEqual(["notices", "uploads"]);
    // an alias is no table of either list: it counts as a record table
    expect(tablesChanged("DELETE u FROM uploads u JOIN checks c ON c.id = u.check_id")).toEqual(["u"]);
    expect(tablesChanged("TRUNCATE TABLE comments")).toEqual(["comments"]);
    for (const read of [
      "select * from engines for update",
      "begin",
      "savepoint sp1",
      "rollback to savepoint sp1",
      "commit",
      "SET SESSION innodb_lock_wait_timeout = 5",
      "SELECT `key` AS k FROM rate_limits WHERE `key` LIKE '%update x set%'",
    ])
      expect(tablesChanged(read), read).toEqual([]);
  });
});

describe("the marks and the check", () => {
  const write = "update `engines` set `name` = ? where `engines`.`id` = ?";
  it("a record table changed outside the write path throws and logs its stack; infrastructure and reads pass", () => {
    const logged = vi.spyOn(console, "error").mockImplementation(() => undefined);
    try {
      expect(() => on.checkStatement(write)).toThrow(on.OutsideWritePath);
      expect(logged.mock.calls[0]![0]).toContain(on.OUTSIDE_MARK);
      expect(String(logged.mock.calls[0]![0])).toContain("write-path.test.ts");
      expect(() => on.checkStatement("insert into `notices` (`id`) values (?)")).not.toThrow();
      expect(() => on.checkStatement("select * from `engines`")).not.toThrow();
    } finally {
      logged.mockRestore();
    }
  });

  it("inside a mark, and in what it awaits, the same statement passes", async () => {
    const later = () => new Promise((r) => setTimeout(r, 1)).then(() => on.checkStatement(write));
    expect(() => on.onWritePath("test", () => on.checkStatement(write))).not.toThrow();
    await expect(on.onWritePath("test", later)).resolves.toBeUndefined();
    const service = on.writeService("test", async (n: number) => (await later(), n));
    await expect(service(7)).resolves.toBe(7);
  });

  it("a mark made by one copy of the module is seen by another (Next bundles it into several chunks)", async () => {
    vi.resetModules();
    vi.stubEnv("LASHWRIGHT_CHECK_WRITES", "1");
    const other = await import("@/db/write-path");
    expect(other).not.toBe(on);
    expect(() => on.onWritePath("test", () => other.checkStatement(write))).not.toThrow();
  });

  it("with the switch off, a named service is the function itself and a mark only calls it", () => {
    const fn = async (n: number) => n;
    expect(off.CHECK_WRITES).toBe(false);
    expect(off.writeService("test", fn)).toBe(fn);
    expect(off.onWritePath("test", () => 5)).toBe(5);
    expect(on.writeService("test", fn)).not.toBe(fn);
  });
});
