import "server-only";
import { createHash, timingSafeEqual } from "node:crypto";
import http from "node:http";
import { Counter, Gauge, Histogram, Registry, collectDefaultMetrics } from "prom-client";
import { poolStats } from "@/db/connection";
import { env } from "@/lib/env";
import { probesMade, readiness, type CheckName } from "./health";
import { log } from "./log";
import { slotsNow } from "./slots";

/**
 * The server's metrics in Prometheus's text format (prom-client), one registry per process: each
 * app instance is scraped on its own address, so a scrape never lands on a random instance behind
 * the load balancer. Served on a port of its own (METRICS_PORT, on the loopback unless METRICS_HOST
 * says otherwise, with a bearer token when METRICS_TOKEN is set), never on the app's port: the
 * balancer and the phones cannot reach it, a scrape is not one of the app's requests (not counted,
 * not shed, no session read), and it answers while the app's handlers are saturated.
 *
 * Every metric is made once and kept on globalThis: the route handlers that count and the listener
 * in instrumentation are bundled into different chunks, each with its own copy of this module.
 */
function make() {
  const registry = new Registry();
  // process CPU and memory, the event loop's delay (what password hashing on the loop would show), GC
  collectDefaultMetrics({ register: registry });
  const registers = [registry];
  const pool = new Gauge({
    name: "lashwright_db_pool_connections",
    help: "Database pool connections by state: in_use, idle, waiting (callers waiting for one), limit",
    labelNames: ["state"] as const,
    registers,
    collect() {
      const s = poolStats();
      if (!s) return;
      this.set({ state: "in_use" }, s.inUse);
      this.set({ state: "idle" }, s.idle);
      this.set({ state: "waiting" }, s.waiting);
      this.set({ state: "limit" }, s.limit);
    },
  });
  const slots = new Gauge({
    name: "lashwright_capped_work",
    help: "Capped work (server/slots.ts) by kind (password_hash, photo_decode) and state (running, queued)",
    labelNames: ["kind", "state"] as const,
    registers,
    collect() {
      for (const s of slotsNow()) {
        this.set({ kind: s.kind, state: "running" }, s.running);
        this.set({ kind: s.kind, state: "queued" }, s.queued);
      }
    },
  });
  // the readiness probe, kept a second (server/health.ts): a scrape adds at most one probe a second;
  // each gauge asks for it when it is read (a gauge is read before the next one's collect runs)
  new Gauge({
    name: "lashwright_notice_queue_depth",
    help: "E-mail notices queued or being sent",
    registers,
    async collect() {
      const n = (await readiness()).notices;
      this.set(n ? n.depth : NaN); // NaN: not known (the database did not answer)
    },
  });
  new Gauge({
    name: "lashwright_notice_oldest_due_seconds",
    help: "How long the oldest due notice has waited",
    registers,
    async collect() {
      const n = (await readiness()).notices;
      this.set(n ? n.oldestDueSeconds : NaN);
    },
  });
  new Counter({
    name: "lashwright_health_probes_total",
    help: "Readiness probes of the database made (one a second at most, however often it is asked)",
    registers,
    collect() {
      this.reset();
      this.inc(probesMade());
    },
  });
  const ready = new Gauge({
    name: "lashwright_ready",
    help: "1 when a readiness check passes, 0 when it fails (stopping, database, cluster, migrations; notices is reported but does not fail readiness)",
    labelNames: ["check"] as const,
    registers,
    async collect() {
      const r = await readiness();
      for (const [check, c] of Object.entries(r.checks)) this.set({ check: check as CheckName }, c.ok ? 1 : 0);
    },
  });
  return {
    registry,
    /** route patterns seen: past MAX_ROUTES a new one is counted as "(other)", so labels stay few whatever is sent */
    routes: new Set<string>(),
    pool,
    slots,
    ready,
    requestSeconds: new Histogram({
      name: "lashwright_http_request_duration_seconds",
      help: "Requests by method, route pattern and status, from arrival to the last byte sent",
      labelNames: ["method", "route", "status"] as const,
      // up to the 13 s a first sync took under a club night's burst
      buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2, 5, 10, 30],
      registers,
    }),
    shed: new Counter({
      name: "lashwright_requests_shed_total",
      help: "Requests answered 503 (busy: try again), by route pattern",
      labelNames: ["route"] as const,
      registers,
    }),
    syncRows: new Counter({
      name: "lashwright_sync_rows_total",
      help: "Sync rows: mutations applied by pushes (push), rows and tombstones sent by pulls (pull)",
      labelNames: ["direction"] as const,
      registers,
    }),
    budgetRefusals: new Counter({
      name: "lashwright_budget_refusals_total",
      help: "Takes refused by a fair-use budget (server/budgets.ts), by budget name",
      labelNames: ["budget"] as const,
      registers,
    }),
  };
}

type Metrics = ReturnType<typeof make>;
const KEY = Symbol.for("lashwright.metrics");
export function metrics(): Metrics {
  return ((globalThis as Record<symbol, Metrics | undefined>)[KEY] ??= make());
}

const MAX_ROUTES = 200;

export function observeRequest(method: string, route: string, status: number, seconds: number): void {
  const m = metrics();
  if (!m.routes.has(route)) {
    if (m.routes.size >= MAX_ROUTES) route = "(other)";
    else m.routes.add(route);
  }
  m.requestSeconds.observe({ method, route, status: String(status) }, seconds);
  // a balancer's check answered 503 is the check's answer, not a request turned away
  if (status === 503 && !route.startsWith("/api/health/")) m.shed.inc({ route });
}

export function countSyncRows(direction: "push" | "pull", rows: number): void {
  if (rows > 0) metrics().syncRows.inc({ direction }, rows);
}

export function countBudgetRefusal(budget: string): void {
  metrics().budgetRefusals.inc({ budget });
}

// ---- the listener -----------------------------------------------------------------------------

const digest = (s: string) => createHash("sha256").update(s).digest();

/** A scrape with the bearer token METRICS_TOKEN names (when set); compared in constant time. */
function authorised(header: string | undefined, token: string | undefined): boolean {
  if (!token) return true;
  const m = /^Bearer (\S+)$/.exec(header ?? "");
  return !!m && timingSafeEqual(digest(m[1]!), digest(token));
}

/**
 * Start the metrics listener when METRICS_PORT is set (from instrumentation.ts). A port already
 * taken is logged and the app serves on without metrics: they must never keep it from starting.
 */
export async function startMetricsServer(unlogged: symbol): Promise<http.Server | null> {
  if (!process.env.METRICS_PORT) return null;
  const e = env();
  if (!e.METRICS_PORT) return null;
  const m = metrics();
  const server = http.createServer((req, res) => {
    const path = (req.url ?? "").split("?")[0];
    if (req.method !== "GET" || path !== "/metrics") {
      res.writeHead(404, { "content-type": "text/plain" }).end("not found\n");
      return;
    }
    if (!authorised(req.headers.authorization, e.METRICS_TOKEN)) {
      res
        .writeHead(401, { "content-type": "text/plain", "www-authenticate": 'Bearer realm="metrics"' })
        .end("a bearer token is required\n");
      return;
    }
    m.registry
      .metrics()
      .then((text) =>
        res.writeHead(200, { "content-type": m.registry.contentType, "cache-control": "no-store" }).end(text),
      )
      .catch((err: unknown) => {
        log.error({ err }, "metrics: a scrape failed");
        res.writeHead(500, { "content-type": "text/plain" }).end("the metrics could not be gathered\n");
      });
  });
  (server as unknown as Record<symbol, true>)[unlogged] = true;
  server.on("error", (err) =>
    log.error(
      { err, port: e.METRICS_PORT, host: e.METRICS_HOST },
      "metrics: the listener could not start; serving without metrics",
    ),
  );
  server.listen(e.METRICS_PORT, e.METRICS_HOST, () =>
    log.info({ port: e.METRICS_PORT, host: e.METRICS_HOST, token: !!e.METRICS_TOKEN }, "metrics: listening"),
  );
  server.unref();
  return server;
}
