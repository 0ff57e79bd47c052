import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import { randomUUID } from "node:crypto";
import http from "node:http";
import { env } from "@/lib/env";
import { log } from "./log";
import { observeRequest } from "./metrics";
import { aroundServerEvents, UNLOGGED } from "./server-events";

/**
 * Every request gets an id, said back in X-Request-Id, carried by its error answers (server/http.ts)
 * and written in its log line, so a phone's report of a failure finds the server's log line. At its
 * end the request is timed into the metrics and logged as one JSON line.
 *
 * Like server/peer-address.ts, the server's 'request' event is run inside an AsyncLocalStorage (here
 * holding the id, the time it came in and, once route() knows it, the route's pattern); installed by
 * instrumentation.ts register() before Next takes any request. On globalThis: instrumentation and
 * the route handlers are bundled into different chunks.
 */
export type RequestContext = { id: string; start: bigint; route?: string; userId?: string };

const KEY = Symbol.for("lashwright.request-context");
type Holder = { storage: AsyncLocalStorage<RequestContext>; installed: boolean };
const holder = ((globalThis as Record<symbol, Holder | undefined>)[KEY] ??= {
  storage: new AsyncLocalStorage<RequestContext>(),
  installed: false,
});

/** A server marked with this is not logged or timed (the metrics listener: a scrape is not a request of the app's). */
export { UNLOGGED };

/** The request being handled, or undefined outside one (or before install). */
export function requestContext(): RequestContext | undefined {
  return holder.storage.getStore();
}

/** Run `fn` in the request's context; one is made when there is none (a request before install). */
export function withRequestContext<T>(fn: (ctx: RequestContext) => Promise<T>): Promise<T> {
  const ctx = holder.storage.getStore();
  if (ctx) return fn(ctx);
  const made: RequestContext = { id: randomUUID(), start: process.hrtime.bigint() };
  return holder.storage.run(made, () => fn(made));
}

/**
 * An id from our own proxy is kept, so one id follows a request through the load balancer's log and
 * ours; from anyone else it is the caller's own words and is replaced (a forged id could be made to
 * match someone else's line). The same rule as X-Forwarded-For (server/throttle.ts clientAddress):
 * only behind TRUSTED_PROXIES > 0, and the proxy must set the header itself, replacing any sent. A
 * header sent twice arrives joined by ", " and so fails the pattern.
 */
const INCOMING_ID = /^[A-Za-z0-9._:-]{8,128}$/;
function trustedProxies(): number {
  try {
    return env().TRUSTED_PROXIES;
  } catch {
    return 0;
  }
}
export function requestIdFrom(incoming: string | string[] | undefined): string {
  if (typeof incoming === "string" && INCOMING_ID.test(incoming) && trustedProxies() > 0) return incoming;
  return randomUUID();
}

const METHODS = new Set(["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"]);

/** A label of few values for what route() did not name: next-auth, a page, a built asset, no route. */
function fallbackRoute(path: string): string {
  if (path.startsWith("/_next/")) return "(asset)";
  if (path.startsWith("/api/auth/")) return "/api/auth/:nextauth";
  if (path.startsWith("/api/")) return "(no route)";
  return "(page)";
}

function finished(req: http.IncomingMessage, res: http.ServerResponse, ctx: RequestContext) {
  const seconds = Number(process.hrtime.bigint() - ctx.start) / 1e9;
  const path = (req.url ?? "").split("?")[0]!.slice(0, 200);
  const route = ctx.route ?? fallbackRoute(path);
  const method = METHODS.has(req.method ?? "") ? req.method! : "OTHER";
  const status = res.statusCode;
  observeRequest(method, route, status, seconds);
  // the query string is left out: it may carry a token (an unsubscribe link)
  const line = {
    requestId: ctx.id,
    method,
    route,
    path,
    status,
    ms: Math.round(seconds * 10_000) / 10,
    ...(ctx.userId ? { userId: ctx.userId } : {}),
    ...(res.writableFinished ? {} : { aborted: true }),
  };
  // a page's scripts and styles are many lines per visit that say nothing
  if (route === "(asset)") log.debug(line, "request");
  else log.info(line, "request");
}

export function installRequestContext(): void {
  if (holder.installed) return;
  holder.installed = true;
  aroundServerEvents(["request"], (_server, _event, args, next) => {
    const req = args[0] as http.IncomingMessage;
    const res = args[1] as http.ServerResponse;
    const ctx: RequestContext = { id: requestIdFrom(req.headers["x-request-id"]), start: process.hrtime.bigint() };
    res.setHeader("X-Request-Id", ctx.id);
    res.once("close", () => {
      try {
        finished(req, res, ctx);
      } catch {
        // the log and the metrics never fail a request
      }
    });
    return holder.storage.run(ctx, next);
  });
}
