import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";

/**
 * DEVELOPERS.md "One write path", checked while the code runs. The applier table and the named
 * write services mark the work they do (onWritePath, writeService); in the test servers
 * (LASHWRIGHT_CHECK_WRITES=1: tests/support/server.ts, scripts/test.mjs) the pool checks every
 * statement before it is sent (db/connection.ts), and one that changes a record table outside that
 * work fails, with its stack in the log. A write handed around as a value or built in a helper is
 * caught where it runs, which reading the source (tests/unit/server/write-path.test.ts) cannot do.
 * Production reads the switch once: no mark is set and no statement is looked at.
 *
 * Kept apart from server/ (db/ never imports it) and from connection.ts (the marks need no pool).
 */
export const CHECK_WRITES = process.env.LASHWRIGHT_CHECK_WRITES === "1";

/**
 * Tables that hold no one's records, only the machinery's own rows: any module may write them. Every
 * other table is a record table, changed only on the write path; a table added to db/schema.ts is
 * one until it is named here (tests/unit/db/write-path.test.ts wants each table in one list).
 */
export const INFRASTRUCTURE_TABLES: ReadonlyMap<string, string> = new Map([
  ["rate_limits", "budgets (server/budgets.ts, through rate-limiter-flexible)"],
  ["notices", "the e-mail notice queue (server/notices.ts)"],
  ["mail_stops", "addresses with no account that asked for no more mail (the notice queue's)"],
  ["object_deletions", "the queue of stored objects to delete (server/object-deletions.ts)"],
  ["sync_clients", "sync bookkeeping: each device's last applied mutation (server/sync.ts)"],
  ["rejected_mutations", "sync bookkeeping: the push's refusals, said again on a replay"],
  ["owner_versions", "sync bookkeeping: the per-owner change counter (db/versions.ts)"],
  ["__drizzle_migrations", "migrations (db/migrate.ts)"],
]);

/** The record tables of db/schema.ts, for the reader: the check treats every table not above as one. */
export const RECORD_TABLES = [
  "users",
  "auth_tokens",
  "clubs",
  "memberships",
  "invites",
  "club_log",
  "engines",
  "checks",
  "readings",
  "reading_history",
  "tray_items",
  "pool_offers",
  "borrow_requests",
  "shares",
  "comments",
  "uploads",
  "tombstones",
] as const;

const ID = String.raw`(?:\x60[^\x60]+\x60|\w+)(?:\s*\.\s*(?:\x60[^\x60]+\x60|\w+))?`;
const name = (id: string) =>
  id
    .split(".")
    .pop()!
    .trim()
    .replace(/^\x60|\x60$/g, "")
    .toLowerCase();
const names = (list: string) => [...list.matchAll(new RegExp(`(?:^|,)\\s*(${ID})`, "g"))].map((m) => name(m[1]!));

/**
 * The tables a statement changes, by name: none for a read, a transaction's own statements (begin,
 * savepoint, commit), a session setting or a schema change. A change whose tables cannot be told
 * apart answers every name it might mean, so an unknown one counts as a record table.
 */
export function tablesChanged(statement: string): string[] {
  // leading comments and blanks; keywords in any case
  const s = statement.replace(/^(?:\s+|\/\*[\s\S]*?\*\/|(?:--|#)[^\n]*(?:\n|$))*/, "");
  const verb = /^\w+/.exec(s)?.[0].toLowerCase();
  let m: RegExpExecArray | null;
  switch (verb) {
    case "insert":
    case "replace":
      m = new RegExp(`^\\w+(?:\\s+(?:low_priority|delayed|high_priority|ignore))*\\s+(?:into\\s+)?(${ID})`, "i").exec(
        s,
      );
      return m ? [name(m[1]!)] : ["?"];
    case "update": {
      // the tables before SET: one, or a join whose every table may be changed
      m = /^update(?:\s+(?:low_priority|ignore))*\s+([\s\S]*?)\s+set\s/i.exec(s);
      if (!m) return ["?"];
      return [...m[1]!.matchAll(new RegExp(`(?:^|,|\\bjoin\\b)\\s*(${ID})`, "gi"))].map((x) => name(x[1]!));
    }
    case "delete": {
      const rest = s.replace(/^delete(?:\s+(?:low_priority|quick|ignore))*\s+/i, "");
      // DELETE FROM t [WHERE ...], DELETE FROM t1, t2 USING ..., or DELETE t1, t2 FROM ...
      m = /^from\s+([\s\S]*?)(?:\s+(?:using|where|order|limit|returning)\s[\s\S]*)?$/i.exec(rest);
      if (m) return names(m[1]!);
      m = /^([\s\S]*?)\s+from\s/i.exec(rest);
      return m ? names(m[1]!) : ["?"];
    }
    case "truncate":
      m = new RegExp(`^truncate\\s+(?:table\\s+)?(${ID})`, "i").exec(s);
      return m ? [name(m[1]!)] : ["?"];
    case "load":
      m = new RegExp(`\\binto\\s+table\\s+(${ID})`, "i").exec(s);
      return m ? [name(m[1]!)] : ["?"];
    default:
      return [];
  }
}

/**
 * What the write path is doing now (a label for the log), set by the marks below. One per process:
 * Next bundles this module into several chunks, and the pool (one per process, db/connection.ts)
 * checks with the copy that made it whichever copy marked the work.
 */
const shared = globalThis as unknown as { lashwrightWritePath?: AsyncLocalStorage<string> };
const onPath = (shared.lashwrightWritePath ??= new AsyncLocalStorage<string>());

/** Run `fn` as the write path's work: the applier table's entry points (server/appliers.ts). */
export function onWritePath<T>(who: string, fn: () => T): T {
  return CHECK_WRITES ? onPath.run(who, fn) : fn();
}

/** A named write service: every call of it is the write path's work (the function itself in production). */
export function writeService<F extends (...args: never[]) => unknown>(who: string, fn: F): F {
  if (!CHECK_WRITES) return fn;
  return ((...args: Parameters<F>) =>
    onPath.run(who, () => (fn as unknown as (...a: unknown[]) => unknown)(...args))) as F;
}

export class OutsideWritePath extends Error {
  constructor(tables: string[], statement: string) {
    super(
      `${tables.join(", ")} changed outside the write path (DEVELOPERS.md "One write path"): go through the applier table or a named write service. Statement: ${statement.slice(0, 200)}`,
    );
    this.name = "OutsideWritePath";
  }
}

/** The line a test server's log carries for each write refused here (tests/support/server.ts looks for it). */
export const OUTSIDE_MARK = "[write-path] refused:";

/**
 * The pool's check of one statement (only when CHECK_WRITES): a change of a record table outside
 * the write path throws, so the request answers 500 and its test fails, and its stack is logged
 * where a caller that swallows errors (a sweep, work after the commit) would hide it.
 */
export function checkStatement(statement: string): void {
  const records = tablesChanged(statement).filter((t) => !INFRASTRUCTURE_TABLES.has(t));
  if (records.length === 0 || onPath.getStore() !== undefined) return;
  // deep enough to pass drizzle's frames and reach the module that wrote
  const limit = Error.stackTraceLimit;
  Error.stackTraceLimit = 40;
  const e = new OutsideWritePath(records, statement);
  Error.stackTraceLimit = limit;
  console.error(`${OUTSIDE_MARK} ${e.stack}`);
  throw e;
}
