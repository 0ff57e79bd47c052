import "server-only";
import http from "node:http";
import { env } from "@/lib/env";
import { log } from "./log";
import { aroundServerEvents } from "./server-events";

/**
 * Stopping an instance without cutting anyone off (SIGTERM from a supervisor, or SIGINT).
 *
 * `next start` handles these signals itself unless NEXT_MANUAL_SIG_HANDLE is set (Next's
 * self-hosting guide, "Manual Graceful Shutdowns"; node_modules/next/dist/server/lib/start-server.js):
 * it closes the listening socket at once and waits, without a bound, for requests in flight. Our
 * start scripts set NEXT_MANUAL_SIG_HANDLE and this module does the rest, in three steps:
 * 1. notice: /api/health/ready answers 503 at once (server/health.ts, check "stopping") while the
 *    instance goes on serving, for SHUTDOWN_NOTICE_MS, so the load balancer takes it out by its own
 *    check and sends it nothing new;
 * 2. close: the listening socket closes, idle keep-alive connections are closed, each request still
 *    running finishes and its answer says "Connection: close"; a new request that arrives on a
 *    connection still open is answered 503 with Retry-After (the phone's "busy, keep the outbox and
 *    try again": lib/sync/transport.ts) and the connection closed, never left unanswered;
 * 3. exit once nothing is in flight, with the code Next uses (143 for SIGTERM, 130 for SIGINT);
 *    and whatever happens, SHUTDOWN_TIMEOUT_MS after the signal the process exits with code 1.
 *
 * A second signal changes nothing (the bound still holds). Without NEXT_MANUAL_SIG_HANDLE (someone
 * ran `next start` by hand), Next's own handler closes at once and this module adds the 503 from
 * ready and the bound. A process whose event loop is blocked cannot run its timer: past the bound
 * the supervisor's SIGKILL is the last word (scripts/lib/procs.mjs).
 *
 * Like server/peer-address.ts and server/request-context.ts, the server's 'request' event is
 * wrapped, here to count the requests in flight and to answer those that arrive after the close;
 * installed before request-context, so such an answer still gets a request id, a log line and its
 * place in the metrics. State on globalThis: instrumentation and route handlers are different chunks.
 */
type Holder = {
  installed: boolean;
  /** since the signal */
  stopping: boolean;
  /** since the notice ended: new requests are refused */
  closed: boolean;
  servers: Set<http.Server>;
  inFlight: Set<http.ServerResponse>;
  drained: (() => void) | null;
};
const KEY = Symbol.for("lashwright.drain");
const holder = ((globalThis as Record<symbol, Holder | undefined>)[KEY] ??= {
  installed: false,
  stopping: false,
  closed: false,
  servers: new Set(),
  inFlight: new Set(),
  drained: null,
});

/** The instance was told to stop: it is not ready (server/health.ts). */
export const stopping = () => holder.stopping;

/** 503 with Retry-After and the connection closed: the same body as server/http.ts's `overloaded`. */
function refuse(res: http.ServerResponse) {
  // set by server/request-context.ts, which wraps this
  const requestId = res.getHeader("x-request-id");
  res.writeHead(503, {
    "content-type": "application/json",
    "cache-control": "no-store",
    "retry-after": "1",
    connection: "close",
  });
  res.end(
    JSON.stringify({
      error: {
        code: "overloaded",
        message: "This server is stopping: try again in a moment",
        ...(typeof requestId === "string" ? { requestId } : {}),
      },
    }),
  );
}

function exit(code: number) {
  // pino writes stdout synchronously (its default destination), so the lines above are out
  process.exit(code);
}

async function stop(signal: NodeJS.Signals, manual: boolean) {
  if (holder.stopping) return;
  holder.stopping = true;
  const e = env();
  const notice = manual ? Math.min(e.SHUTDOWN_NOTICE_MS, e.SHUTDOWN_TIMEOUT_MS) : 0;
  log.info(
    { signal, noticeMs: notice, boundMs: e.SHUTDOWN_TIMEOUT_MS, inFlight: holder.inFlight.size },
    "shutdown: not ready from now; serving until the load balancer has taken this instance out",
  );
  // the bound, whatever happens below (left referenced: it must fire even with nothing else pending)
  setTimeout(() => {
    log.warn({ inFlight: holder.inFlight.size }, "shutdown: the bound is reached, exiting with requests unfinished");
    exit(1);
  }, e.SHUTDOWN_TIMEOUT_MS);
  if (!manual) return; // Next's own handler closes the server and exits
  await new Promise((r) => setTimeout(r, notice));
  holder.closed = true;
  log.info({ inFlight: holder.inFlight.size }, "shutdown: closed to new connections; finishing the requests in flight");
  for (const res of holder.inFlight) if (!res.headersSent) res.setHeader("connection", "close");
  for (const s of holder.servers) {
    s.close(); // stops listening; Node also closes the idle keep-alive connections
    s.closeIdleConnections();
  }
  if (holder.inFlight.size) await new Promise<void>((r) => (holder.drained = r));
  log.info("shutdown: every request answered; exiting");
  exit(signal === "SIGINT" ? 130 : 143);
}

export function installDrain(): void {
  if (holder.installed) return;
  holder.installed = true;
  aroundServerEvents(["request", "connection"], (server, event, args, next) => {
    // the app's server is known from its first connection (a balancer's first check, at the latest)
    holder.servers.add(server);
    if (event === "connection") return next();
    const res = args[1] as http.ServerResponse;
    if (holder.closed) {
      refuse(res);
      return true;
    }
    holder.inFlight.add(res);
    // while the balancer takes this instance out, no connection is kept for a next request
    if (holder.stopping) res.setHeader("connection", "close");
    res.once("close", () => {
      holder.inFlight.delete(res);
      if (!holder.closed) return;
      // the connection it came on is idle now: closed before another request can use it
      for (const s of holder.servers) s.closeIdleConnections();
      if (!holder.inFlight.size) holder.drained?.();
    });
    return next();
  });
  const manual = Boolean(process.env.NEXT_MANUAL_SIG_HANDLE);
  for (const signal of ["SIGTERM", "SIGINT"] as const) process.on(signal, () => void stop(signal, manual));
}
