import "server-only";
import mysql from "mysql2/promise";
import journal from "@/db/migrations/meta/_journal.json";
import { env } from "@/lib/env";
import { stopping } from "./drain";
import { log } from "./log";

/**
 * Is this instance fit to be given requests? Asked by the load balancer every second or so
 * (/api/health/ready), and read by the metrics. Five checks:
 * - stopping: the instance was told to stop (SIGTERM, server/drain.ts): not ready at once, without a
 *   probe, so the balancer takes it out while it finishes what it holds;
 * - database: the database answers, within HEALTH_TIMEOUT_MS;
 * - cluster: on a Galera node (wsrep_on), the node is Synced: a joining, donor or cut-off node
 *   refuses or delays queries (a node without wsrep passes);
 * - migrations: the database holds exactly the migrations this build shipped (its journal,
 *   db/migrations/meta). Missing ones: this code would query columns that are not there. Unknown
 *   ones: a newer build migrated the database under this one (and migrations may drop what this
 *   build still reads), so traffic goes to the instances of the newer build;
 * - notices: the oldest notice that is due has waited at most NOTICE_STUCK_SECONDS (delivery runs
 *   every 15 s on every instance, so a notice that waits longer means delivery is failing). This one
 *   is reported (the ready answer's `warnings`, the metric lashwright_ready{check="notices"}, a log
 *   line) but does not make the instance unready: the queue is one table that every instance reads
 *   and sends from, so a stuck queue (the mail server down, a notice that cannot be sent) looks the
 *   same from every instance, and failing readiness for it would take the whole cluster out of the
 *   balancer for a mail problem, stopping every sync and sign-in and sending no more mail. No
 *   instance can tell that the fault is its own (one instance's wrong mail settings still leave the
 *   others sending, so the queue moves and is not stuck), so there is no case where taking one out helps.
 *
 * The probe has its own connection, not the pool's: a pool that is full is load the app sheds by
 * itself (503 with Retry-After per request), and must not make the balancer take out an instance
 * that is serving; and the probe never waits behind a request. One probe runs at a time, and its
 * answer is kept for a second, so a balancer's checks (and scrapes) cost one probe a second at most.
 * State on globalThis: the ready route and the metrics live in different chunks.
 */
export type CheckName = "stopping" | "database" | "cluster" | "migrations" | "notices";
/** checks reported, but not part of `ok` (see "notices" above) */
export const ADVISORY: readonly CheckName[] = ["notices"];
/** skipped: not asked, because an earlier check failed (not ok either, but not the cause) */
export type Check = { ok: boolean; skipped?: true; detail?: string };
export type Readiness = {
  /** every check but the advisory ones passed */
  ok: boolean;
  checks: Record<CheckName, Check>;
  /** the notice queue (queued or being sent) and how long its oldest due notice has waited, in seconds */
  notices: { depth: number; oldestDueSeconds: number } | null;
};

const KEEP_MS = 1000;

type Holder = {
  conn: Promise<mysql.Connection> | null;
  running: Promise<Readiness> | null;
  last: { at: number; value: Readiness } | null;
  probes: number;
  said: string;
  error: unknown;
};
const KEY = Symbol.for("lashwright.health");
const holder = ((globalThis as Record<symbol, Holder | undefined>)[KEY] ??= {
  conn: null,
  running: null,
  last: null,
  probes: 0,
  said: "",
  error: undefined,
});

/** Probes made since the process started (the metrics show it: a balancer's checks must not multiply it). */
export const probesMade = () => holder.probes;

/** The migrations this build shipped, by the time drizzle's migrator records for each (its journal's `when`). */
const SHIPPED: readonly number[] = journal.entries.map((e) => e.when);

function connection(): Promise<mysql.Connection> {
  holder.conn ??= mysql
    .createConnection({
      uri: env().DATABASE_URL,
      connectTimeout: env().HEALTH_TIMEOUT_MS,
      supportBigNumbers: true,
      bigNumberStrings: false,
    })
    .then((c) => {
      // a connection the server dropped (a restart, a failover) is made again at the next probe
      c.on("error", () => forget(c));
      return c;
    })
    .catch((e: unknown) => {
      holder.conn = null;
      throw e;
    });
  return holder.conn;
}

function forget(c?: mysql.Connection) {
  holder.conn = null;
  c?.destroy();
}

const NOT_CHECKED: Check = { ok: false, skipped: true, detail: "not checked: the database did not answer" };

async function probe(): Promise<Readiness> {
  const e = env();
  const checks: Record<CheckName, Check> = {
    stopping: { ok: true },
    database: { ok: true },
    cluster: { ok: true },
    migrations: NOT_CHECKED,
    notices: NOT_CHECKED,
  };
  let notices: Readiness["notices"] = null;
  let conn: mysql.Connection | undefined;
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error("timeout")), e.HEALTH_TIMEOUT_MS);
  });
  try {
    await Promise.race([
      timeout,
      (async () => {
        conn = await connection();
        const [on] = await conn.query("SHOW GLOBAL VARIABLES LIKE 'wsrep_on'");
        if ((on as { Value?: string }[])[0]?.Value === "ON") {
          const [state] = await conn.query("SHOW GLOBAL STATUS LIKE 'wsrep_local_state_comment'");
          const comment = String((state as { Value?: string }[])[0]?.Value ?? "unknown");
          if (comment !== "Synced") {
            checks.cluster = { ok: false, detail: `the node is ${comment.slice(0, 40)}, not Synced` };
            checks.migrations = checks.notices = {
              ok: false,
              skipped: true,
              detail: "not checked: the node is not synced",
            };
            return;
          }
        }
        const [rows] = await conn.query("SELECT created_at AS at FROM __drizzle_migrations");
        const applied = new Set((rows as { at: number | string }[]).map((r) => Number(r.at)));
        const missing = SHIPPED.filter((w) => !applied.has(w)).length;
        const unknown = [...applied].filter((w) => !SHIPPED.includes(w)).length;
        checks.migrations =
          missing || unknown
            ? {
                ok: false,
                detail: [
                  missing ? `${missing} of this build's migrations not applied` : "",
                  unknown ? `${unknown} applied that this build does not know (a newer build's)` : "",
                ]
                  .filter(Boolean)
                  .join("; "),
              }
            : { ok: true };
        // due: queued and its time has come, or claimed by a sender whose claim ran out (it died)
        const [q] = await conn.query(`
          SELECT (SELECT COUNT(*) FROM notices WHERE status IN ('queued', 'sending')) AS depth,
                 TIMESTAMPDIFF(SECOND, LEAST(
                   COALESCE((SELECT MIN(next_attempt_at) FROM notices WHERE status = 'queued' AND next_attempt_at <= NOW(3)), NOW(3)),
                   COALESCE((SELECT MIN(claimed_until) FROM notices WHERE status = 'sending' AND claimed_until < NOW(3)), NOW(3))), NOW(3)) AS waited`);
        const row = (q as { depth: number | string; waited: number | string }[])[0]!;
        notices = { depth: Number(row.depth), oldestDueSeconds: Number(row.waited) };
        const bound = e.NOTICE_STUCK_SECONDS;
        checks.notices =
          bound > 0 && notices.oldestDueSeconds > bound
            ? {
                ok: false,
                detail: `the oldest due notice has waited ${notices.oldestDueSeconds} s (more than ${bound} s)`,
              }
            : { ok: true };
      })(),
    ]);
  } catch (err) {
    // no database message in the answer (it may name hosts or users); the log has it
    const timedOut = err instanceof Error && err.message === "timeout";
    checks.database = {
      ok: false,
      detail: timedOut ? `no answer within ${e.HEALTH_TIMEOUT_MS} ms` : "cannot reach the database",
    };
    forget(conn);
    holder.error = err;
  } finally {
    clearTimeout(timer);
  }
  // a copy: a query that answers after the time ran out must not change an answer already given
  const copy = { ...checks };
  return { ok: counts(copy), checks: copy, notices };
}

const counts = (checks: Record<CheckName, Check>) =>
  Object.entries(checks).every(([name, c]) => c.ok || ADVISORY.includes(name as CheckName));

/** Told to stop: not ready, whatever the last probe said (which is kept for the other checks' display). */
function stoppingNow(): Readiness {
  const last = holder.last?.value;
  const checks: Record<CheckName, Check> = {
    ...(last?.checks ?? {
      database: NOT_CHECKED,
      cluster: NOT_CHECKED,
      migrations: NOT_CHECKED,
      notices: NOT_CHECKED,
    }),
    stopping: { ok: false, detail: "this instance is stopping: finishing the requests it holds" },
  };
  return { ok: false, checks, notices: last?.notices ?? null };
}

/** The instance's readiness, probed at most once a second. */
export function readiness(): Promise<Readiness> {
  if (stopping()) return Promise.resolve(stoppingNow());
  if (holder.running) return holder.running;
  if (holder.last && Date.now() - holder.last.at < KEEP_MS) return Promise.resolve(holder.last.value);
  holder.probes++;
  holder.running = probe().finally(() => {
    holder.running = null;
  });
  void holder.running.then((value) => {
    holder.last = { at: Date.now(), value };
    // logged when the checks failing change, not at every check of the balancer's (nor as a stuck
    // notice's waiting time grows)
    const failing = (advisory: boolean) =>
      Object.entries(value.checks).filter(
        ([name, c]) => !c.ok && !c.skipped && ADVISORY.includes(name as CheckName) === advisory,
      );
    const said = (list: [string, Check][]) => list.map(([name, c]) => `${name}: ${c.detail ?? "failed"}`).join("; ");
    const failed = failing(false);
    const warnings = failing(true);
    const key = [...failed, ["|"], ...warnings].map(([name]) => name).join(",");
    if (key !== holder.said) {
      if (failed.length)
        log.warn(
          {
            failed: said(failed),
            warnings: warnings.length ? said(warnings) : undefined,
            err: value.checks.database.ok ? undefined : holder.error,
          },
          "readiness: not ready",
        );
      else if (warnings.length)
        log.warn({ warnings: said(warnings) }, "readiness: ready, but something needs an operator");
      else if (holder.said) log.info("readiness: ready again");
      holder.said = key;
    }
    holder.error = undefined;
  });
  return holder.running;
}
