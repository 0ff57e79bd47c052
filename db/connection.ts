import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import { drizzle, type MySql2Database } from "drizzle-orm/mysql2";
import type { MySqlTransactionConfig } from "drizzle-orm/mysql-core";
import mysql from "mysql2/promise";
import { env } from "@/lib/env";
import { overloaded } from "@/lib/errors";
import * as schema from "./schema";
import { CHECK_WRITES, checkStatement } from "./write-path";

type Drizzle = MySql2Database<typeof schema>;
export type Tx = Parameters<Parameters<Drizzle["transaction"]>[0]>[0];
/** The pool outside a transaction: it cannot start one (use transaction()), so every write goes through it. */
export type Db = Omit<Drizzle, "transaction">;
/** Where a query runs: the pool (a read on its own) or the caller's transaction. */
export type Executor = Db | Tx;

// One pool per process, kept across hot reloads in development (module state is reset there).
const globalForDb = globalThis as unknown as {
  lashwrightPool?: mysql.Pool;
  lashwrightDb?: Drizzle;
  lashwrightPoolWaiting?: () => number;
  lashwrightInTransaction?: AsyncLocalStorage<true>;
};

/**
 * Marks the code running inside transaction(). Asking the pool for a connection there (db()) is
 * how pushes once deadlocked the server: each held one connection and waited for a second.
 */
// One store per process, like the pool: the build copies this module into several chunks, and a
// transaction opened through one copy must be seen by db() called through another.
const inTransaction = (globalForDb.lashwrightInTransaction ??= new AsyncLocalStorage<true>());

export class NestedConnectionError extends Error {
  constructor() {
    super(
      "db() was called inside a transaction: pass the transaction (the executor) instead of asking the pool for a second connection",
    );
  }
}

/**
 * A bounded wait for a connection: mysql2's pool waits forever. A waiter that times out gets the
 * overloaded error (503 with Retry-After); if a connection reaches it later, it goes straight back.
 */
function boundAcquire(p: mysql.Pool, timeoutMs: number) {
  const core = (p as unknown as { pool: { getConnection(cb: (err: unknown, c?: { release(): void }) => void): void } })
    .pool;
  const acquire = core.getConnection.bind(core);
  core.getConnection = (cb) => {
    let settled = false;
    poolWaiting++;
    const timer = setTimeout(() => {
      settled = true;
      poolWaiting--;
      cb(overloaded("The server is busy (no database connection free): try again in a moment"));
    }, timeoutMs);
    acquire((err, conn) => {
      if (settled) return conn?.release();
      settled = true;
      poolWaiting--;
      clearTimeout(timer);
      cb(err, conn);
    });
  };
}

// callers asking for a connection and not yet answered (one that gave up is no longer counted)
let poolWaiting = 0;

/**
 * The pool's connections for the metrics: in use, open and idle, and callers waiting. Read from
 * mysql2's pool (its own counts have no public getter); null before the pool is made.
 */
export function poolStats(): { inUse: number; idle: number; waiting: number; limit: number } | null {
  const p = globalForDb.lashwrightPool;
  if (!p) return null;
  const core = (
    p as unknown as {
      pool: {
        _allConnections: { length: number };
        _freeConnections: { length: number };
        config: { connectionLimit: number };
      };
    }
  ).pool;
  const all = core._allConnections.length;
  const idle = core._freeConnections.length;
  return {
    inUse: all - idle,
    idle,
    waiting: globalForDb.lashwrightPoolWaiting?.() ?? 0,
    limit: core.config.connectionLimit,
  };
}

type Sender = (statement: unknown, values?: unknown) => Promise<unknown>;
/** Check each statement a client sends (its text, given alone or as { sql }) before it goes. */
function checkSends(c: Pick<mysql.Pool, "query" | "execute">) {
  for (const method of ["query", "execute"] as const) {
    const send = (c[method] as unknown as Sender).bind(c);
    (c as unknown as Record<typeof method, Sender>)[method] = async (statement, values) => {
      // checked one turn later: resumed from an await, the stack goes on through the caller's awaits
      // (V8's async frames) to the code that made the change, not only drizzle's own frames
      await undefined;
      checkStatement(typeof statement === "string" ? statement : ((statement as { sql?: string }).sql ?? ""));
      return send(statement, values);
    };
  }
}

/**
 * The test servers' check of the one write path (db/write-path.ts): every statement sent through
 * the pool, or through a connection taken from it for a transaction, is checked first, in the
 * caller's own async context (where the write path's mark is). Budgets use the callback pool
 * beneath (rate_limits, a table of the machinery), which is not checked.
 */
function checkWritePath(p: mysql.Pool) {
  checkSends(p);
  const take = p.getConnection.bind(p);
  p.getConnection = async () => {
    const c = await take();
    checkSends(c);
    return c;
  };
}

export function connectionPool(): mysql.Pool {
  if (!globalForDb.lashwrightPool) {
    const e = env();
    const p = mysql.createPool({
      uri: e.DATABASE_URL,
      connectionLimit: e.DB_POOL_SIZE,
      // decimals arrive as strings; drizzle's mode "number" converts the columns it knows
      supportBigNumbers: true,
      timezone: "Z",
      dateStrings: false,
    });
    boundAcquire(p, e.DB_ACQUIRE_TIMEOUT_MS);
    // test servers only: production sends each statement straight to mysql2, untouched
    if (CHECK_WRITES) checkWritePath(p);
    // the count lives in the copy of this module that made the pool; the metrics may read from another
    globalForDb.lashwrightPoolWaiting = () => poolWaiting;
    // Every wait inside the database is bounded, then fails cleanly (503 with Retry-After): a row lock
    // (InnoDB's own default is 50 s), a table or global lock (lock_wait_timeout's default is a year: a
    // Galera donor sending a full copy by rsync holds the global read lock that long), and a statement
    // (max_statement_time, MariaDB's, none by default). Sent before the connection's first query.
    p.pool.on("connection", (c) =>
      c.query(
        `SET SESSION innodb_lock_wait_timeout = ${e.DB_LOCK_WAIT_SECONDS}, lock_wait_timeout = ${e.DB_LOCK_WAIT_SECONDS}, max_statement_time = ${e.DB_STATEMENT_SECONDS}`,
      ),
    );
    globalForDb.lashwrightPool = p;
  }
  return globalForDb.lashwrightPool;
}

function drizzleDb(): Drizzle {
  if (!globalForDb.lashwrightDb) globalForDb.lashwrightDb = drizzle(connectionPool(), { schema, mode: "default" });
  return globalForDb.lashwrightDb;
}

/** The pool, for work outside a transaction. Inside one it throws: use the transaction you were given. */
export function db(): Db {
  if (inTransaction.getStore()) throw new NestedConnectionError();
  return drizzleDb();
}

// one drizzle per pooled connection (mysql2 keeps the same connection object under each checkout)
const onConnection = new WeakMap<object, Drizzle>();

/**
 * The one way to open a transaction; the code inside cannot reach the pool (see db()).
 *
 * The connection is taken and given back here, not by drizzle: drizzle's transaction over a pool
 * sends BEGIN (and SET TRANSACTION) before its try/finally, so when that statement fails the
 * connection is never released. On a Galera node one failed (which of the two was not caught) while
 * a killed member came back, and an instance lost its connections and answered only 503 for minutes
 * (tests/cluster/faults.test.ts, node 1 killed eight times in a row). So: released after drizzle's
 * own commit or rollback; after any other failure (BEGIN, COMMIT or the rollback itself) rolled
 * back once more, and destroyed, not reused, if even that fails.
 */
export function transaction<T>(fn: (tx: Tx) => Promise<T>, config?: MySqlTransactionConfig): Promise<T> {
  if (inTransaction.getStore()) return Promise.reject(new NestedConnectionError());
  return inTransaction.run(true, async () => {
    const conn = await connectionPool().getConnection();
    let own: { error: unknown } | undefined;
    let reusable = true;
    try {
      const core = (conn as unknown as { connection: object }).connection;
      let d = onConnection.get(core);
      if (!d) onConnection.set(core, (d = drizzle(conn, { schema, mode: "default" })));
      return await d.transaction(async (tx) => {
        try {
          return await fn(tx);
        } catch (e) {
          own = { error: e };
          throw e;
        }
      }, config);
    } catch (e) {
      // fn's own failure has been rolled back by drizzle; anything else may have left a transaction open
      if (own?.error !== e)
        reusable = await conn.query("ROLLBACK").then(
          () => true,
          () => false,
        );
      throw e;
    } finally {
      if (reusable) conn.release();
      else conn.destroy();
    }
  });
}

export async function closeDb(): Promise<void> {
  const p = globalForDb.lashwrightPool;
  globalForDb.lashwrightPool = undefined;
  globalForDb.lashwrightDb = undefined;
  if (p) await p.end();
}
