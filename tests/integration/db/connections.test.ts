import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { sql } from "drizzle-orm";
import { closeDb, connectionPool, db, NestedConnectionError, transaction } from "@/db/connection";
import { DomainError } from "@/lib/errors";
import { APPLIERS } from "@/server/appliers";
import { mutationNames } from "@/lib/sync/mutations";

/**
 * The rule that ended the club-night freeze: code inside a transaction never asks the pool for a
 * second connection. Here on a pool of one connection with a short acquire timeout, as the whole
 * integration suite runs its servers (tests/support/server.ts), so any route that broke the rule
 * would wait for a connection it holds itself.
 */
beforeAll(() => {
  process.env.DB_POOL_SIZE = "1";
  process.env.DB_ACQUIRE_TIMEOUT_MS = "300";
});
afterAll(() => closeDb());

describe("database connections", () => {
  it("refuses db() inside a transaction instead of taking a second connection", async () => {
    const inside = transaction(async (tx) => {
      await tx.execute(sql`SELECT 1`);
      await db().execute(sql`SELECT 1`);
    });
    await expect(inside).rejects.toBeInstanceOf(NestedConnectionError);
    // a transaction cannot be opened inside another either (savepoints go through tx.transaction)
    await expect(transaction(() => transaction(async () => 1))).rejects.toBeInstanceOf(NestedConnectionError);
    // and after it, the pool is usable again
    expect(await transaction(async (tx) => (await tx.execute(sql`SELECT 2 AS n`))[0])).toBeTruthy();
  });

  it("gives its connection back when the transaction's own opening statement fails, with no transaction left open on it", async () => {
    // a connection left inside a transaction: MariaDB then refuses SET TRANSACTION on it (error 1568,
    // ER_CANT_CHANGE_TX_CHARACTERISTICS: the number from memory; the test matches the statement),
    // as a Galera node may refuse BEGIN while a killed member comes back (db/connection.ts transaction)
    const c = await connectionPool().getConnection();
    await c.query("START TRANSACTION");
    c.release();
    let ran = false;
    const opening = transaction(
      async () => {
        ran = true;
      },
      { isolationLevel: "read committed" },
    );
    await expect(opening).rejects.toThrow(/set transaction/i);
    expect(ran).toBe(false);
    // the pool's only connection is back (not "busy" after the 300 ms acquire timeout), outside any transaction
    const [[row]] = (await db().execute(sql`SELECT @@in_transaction AS open`)) as unknown as [{ open: number }[]];
    expect(Number(row!.open)).toBe(0);
    expect(await transaction(async (tx) => (await tx.execute(sql`SELECT 3 AS n`))[0])).toEqual([{ n: 3 }]);
  });

  it("sees a transaction opened through another copy of the module (the build copies it into several chunks)", async () => {
    vi.resetModules();
    const other = await import("@/db/connection");
    expect(other.db).not.toBe(db);
    const inside = transaction(async (tx) => {
      await tx.execute(sql`SELECT 1`);
      await other.db().execute(sql`SELECT 1`);
    });
    await expect(inside).rejects.toBeInstanceOf(other.NestedConnectionError);
  });

  it("answers a request waiting for a busy pool with 'overloaded' after the acquire timeout, not never", async () => {
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    let entered!: () => void;
    const holding = new Promise<void>((r) => (entered = r));
    const holder = transaction(async (tx) => {
      await tx.execute(sql`SELECT 1`);
      entered();
      await held;
    });
    // ordered by an event, not a head start: the only connection is taken before anyone waits for it
    await holding;
    const t0 = Date.now();
    const waiting = db()
      .execute(sql`SELECT 1`)
      .then(
        () => "answered",
        (e: unknown) => e,
      );
    const outcome = await waiting;
    expect(outcome).toBeInstanceOf(Error);
    const cause = (outcome as { cause?: unknown }).cause ?? outcome;
    expect(cause).toBeInstanceOf(DomainError);
    expect((cause as DomainError).kind).toBe("overloaded");
    expect(Date.now() - t0).toBeLessThan(5_000);
    release();
    await holder;
    // the connection the late waiter would have got went back to the pool
    expect(await db().execute(sql`SELECT 3`)).toBeTruthy();
  });

  it("has an applier for every outbox mutation", () => {
    expect(Object.keys(APPLIERS).sort()).toEqual([...mutationNames].sort());
  });
});
