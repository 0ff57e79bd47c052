import "server-only";
import { NextResponse, type NextRequest } from "next/server";
import { z } from "zod";
import { fieldErrors, LashInputError } from "@/lib/lash";
import { ID_PATTERN } from "@/lib/schemas/records";
import { domainErrorOf, type DomainError, type DomainErrorKind } from "@/lib/errors";
import { isTransientDbError } from "@/db/errors";
import { SESSION_REVOKED_CODE } from "@/lib/sync/transport";
import { currentSession, type SessionUser } from "./auth";
import { log } from "./log";
import { contentTypeRefusal, readBody, sameOriginRefusal } from "./request-guard";
import { requestContext, withRequestContext, type RequestContext } from "./request-context";
import { pageQuery, type Sendable } from "@/lib/api/contract";

export { pageQuery };

/**
 * The one place that turns a request into validated input and an error into the error shape
 * `{ error: { code, message, fields?, requestId } }` (the id is also in the X-Request-Id header and
 * in the request's log line, server/request-context.ts). Every route handler is built with `route()`. Services
 * throw domain errors (lib/errors.ts); this is the only place they become HTTP statuses.
 */
const STATUS: Record<DomainErrorKind, number> = {
  invalid: 422,
  not_found: 404,
  forbidden: 403,
  conflict: 409,
  refused: 409,
  too_large: 413,
  unsupported: 415,
  bad_request: 400,
  overloaded: 503,
  throttled: 429,
};

/** How long a phone is asked to wait when the server is saturated; it adds its own jitter. */
export const RETRY_AFTER_SECONDS = 2;

/** 503 with Retry-After: the request was not applied and may be sent again as it is. */
export function overloadedResponse(
  message = "The server is busy: try again in a moment",
  retryAfterSeconds = RETRY_AFTER_SECONDS,
) {
  const res = errorResponse(503, "overloaded", message);
  res.headers.set("Retry-After", String(retryAfterSeconds));
  return res;
}

function domainResponse(e: DomainError) {
  if (e.kind === "overloaded") return overloadedResponse(e.message, e.extra.retryAfterSeconds);
  const res = errorResponse(STATUS[e.kind], e.extra.code ?? e.kind, e.message, e.extra.fields);
  // a refusal that names its wait (a spent budget: 429) says it as RFC 9110 section 10.2.3 asks
  if (e.extra.retryAfterSeconds !== undefined)
    res.headers.set("Retry-After", String(Math.max(1, Math.ceil(e.extra.retryAfterSeconds))));
  return res;
}

const MAX_BODY_BYTES = 256 * 1024;

/** The error shape, carrying the request's id. */
export function errorBody(code: string, message: string, fields?: Record<string, string>) {
  const requestId = requestContext()?.id;
  return { error: { code, message, ...(fields ? { fields } : {}), ...(requestId ? { requestId } : {}) } };
}

export function errorResponse(status: number, code: string, message: string, fields?: Record<string, string>) {
  return NextResponse.json(errorBody(code, message, fields), { status });
}

/**
 * The route's pattern ("/api/engines/:engineId/checks") for the metrics and the log: each segment
 * that is a parameter's value is put back as its name. Undefined when that does not account for
 * every parameter (an odd encoding), so no sent text ever becomes a metric's label.
 */
function routePattern(path: string, params: Record<string, string | string[]>): string | undefined {
  const names = new Map<string, string>();
  for (const [k, v] of Object.entries(params)) if (typeof v === "string") names.set(v, k);
  const used = new Set<string>();
  const out = path.split("/").map((seg) => {
    let value = seg;
    try {
      value = decodeURIComponent(seg);
    } catch {
      /* not valid percent-encoding: compared as sent */
    }
    const k = names.get(value);
    if (k === undefined) return seg;
    used.add(k);
    return `:${k}`;
  });
  return used.size === Object.keys(params).length ? out.join("/") : undefined;
}

type Ctx<P, Q, B, A extends boolean> = {
  req: NextRequest;
  params: P;
  query: Q;
  body: B;
  user: A extends true ? SessionUser : SessionUser | null;
};

/**
 * What a handler may return for its response schema R: the schema's output (a Date where an instant
 * is sent), nothing for 204, or a Response of its own (a file, a redirect, a status of its own).
 */
type Reply<R extends z.ZodType> = [z.output<R>] extends [never]
  ? never
  : [z.output<R>] extends [undefined]
    ? void
    : Sendable<z.output<R>>;

/**
 * Under test every answer is checked against its route's response schema (lib/api/contract.ts):
 * the test servers set this (tests/support/server.ts, scripts/test.mjs). Production never pays for
 * a full parse of a pull's thousand rows; there the compiler's check of the handler is the guard.
 */
const CHECK_CONTRACT = process.env.LASHWRIGHT_CHECK_CONTRACT === "1";

/** The JSON about to be sent, checked against the contract; a 500 that says so when it is outside. */
function contractRefusal(schema: z.ZodType, json: unknown, req: NextRequest, requestId: string): Response | null {
  const r = schema.safeParse(json);
  if (r.success) return null;
  const issues = r.error.issues.slice(0, 5).map((i) => `${i.path.map(String).join(".") || "(body)"}: ${i.message}`);
  log.error(
    { requestId, method: req.method, path: req.nextUrl.pathname, issues },
    `answer outside its contract: ${req.method} ${req.nextUrl.pathname}: ${issues.join("; ")}`,
  );
  return errorResponse(500, "contract", `The server's answer broke its contract (request ${requestId})`);
}

/** A Response a handler made itself: its JSON body (2xx only) checked like any other answer. */
async function checkOwnResponse(schema: z.ZodType, res: Response, req: NextRequest, requestId: string) {
  if (!res.ok || res.status === 204 || !(res.headers.get("content-type") ?? "").includes("json")) return null;
  return contractRefusal(schema, await res.clone().json(), req, requestId);
}

interface RouteOptions<
  P extends z.ZodType,
  Q extends z.ZodType,
  B extends z.ZodType,
  A extends boolean,
  R extends z.ZodType,
> {
  /** the success body's schema, from lib/api/contract.ts `answers` */
  response: R;
  params?: P;
  query?: Q;
  body?: B;
  /** default true: anonymous callers get 401 */
  auth?: A;
  /** status of a successful answer (default 200; 204 sends no body) */
  status?: number;
  /**
   * Take state-changing calls from anywhere: only for a route whose authority is a signed token in
   * its address, POSTed by a mail provider's server rather than our pages (RFC 8058 one-click
   * unsubscribe). Every other route refuses a call that is not from our own pages.
   */
  anyOrigin?: true;
  /** false: the session is not read (no cookie decoded, no database asked): only with auth: false (health checks) */
  session?: A extends false ? false : never;
}

export function route<
  P extends z.ZodType = z.ZodType<Record<string, never>>,
  Q extends z.ZodType = z.ZodType<Record<string, never>>,
  B extends z.ZodType = z.ZodType<undefined>,
  A extends boolean = true,
  R extends z.ZodType = z.ZodType,
>(
  opts: RouteOptions<P, Q, B, A, R>,
  fn: (ctx: Ctx<z.output<P>, z.output<Q>, z.output<B>, A>) => Promise<Reply<R> | Response>,
) {
  return (req: NextRequest, ctx: { params: Promise<Record<string, string | string[]>> }) =>
    withRequestContext(async (rc) => {
      const res = await handle(req, ctx, rc);
      res.headers.set("X-Request-Id", rc.id);
      return res;
    });

  async function handle(
    req: NextRequest,
    ctx: { params: Promise<Record<string, string | string[]>> },
    rc: RequestContext,
  ): Promise<Response> {
    const requestId = rc.id;
    try {
      const rawParams = ctx?.params ? await ctx.params : {};
      rc.route = routePattern(req.nextUrl.pathname, rawParams);
      const crossSite = opts.anyOrigin ? null : sameOriginRefusal(req);
      if (crossSite) throw crossSite;
      const { user, revoked } = opts.session === false ? { user: null, revoked: false } : await currentSession();
      // "revoked" tells a phone that its session was ended elsewhere, so it wipes its local copy
      // (lib/sync/phone-sync.ts); only a cookie signed by us can earn it (OWASP ASVS 5.0 V7)
      // the log line says whose request it was (an id, never an address or a name)
      if (user) rc.userId = user.id;
      if (opts.auth !== false && !user)
        return revoked
          ? errorResponse(
              401,
              SESSION_REVOKED_CODE,
              "This session was ended (signed out everywhere, or a new password): sign in again",
            )
          : errorResponse(401, "unauthorized", "Sign in first");
      const params = opts.params ? opts.params.safeParse(rawParams) : { success: true as const, data: rawParams };
      // A malformed id is just an id that names nothing.
      if (!params.success) return errorResponse(404, "not_found", "No such record");
      const query = opts.query
        ? opts.query.safeParse(Object.fromEntries(req.nextUrl.searchParams))
        : { success: true as const, data: {} };
      if (!query.success)
        return errorResponse(422, "invalid", "The query string is not valid", fieldErrors(query.error.issues));
      // after the ids, so a hostile id answers 404 whatever was sent; before anything is read
      const wrongType = opts.body ? contentTypeRefusal(req, "json") : null;
      if (wrongType) throw wrongType;
      let body: unknown = undefined;
      if (opts.body) {
        const text = new TextDecoder().decode(await readBody(req, MAX_BODY_BYTES));
        let json: unknown;
        try {
          json = text === "" ? undefined : JSON.parse(text);
        } catch {
          return errorResponse(400, "bad_json", "The body is not valid JSON");
        }
        const parsed = opts.body.safeParse(json);
        if (!parsed.success) {
          const fields = fieldErrors(parsed.error.issues);
          const first = Object.entries(fields)[0];
          return errorResponse(422, "invalid", first ? `${first[0]}: ${first[1]}` : "The body is not valid", fields);
        }
        body = parsed.data;
      }
      const result = await fn({ req, params: params.data, query: query.data, body, user } as Ctx<
        z.output<P>,
        z.output<Q>,
        z.output<B>,
        A
      >);
      if (result instanceof Response)
        return (CHECK_CONTRACT && (await checkOwnResponse(opts.response, result, req, requestId))) || result;
      const status = opts.status ?? 200;
      if (status === 204)
        return (
          (CHECK_CONTRACT && contractRefusal(opts.response, result, req, requestId)) ||
          new NextResponse(null, { status })
        );
      const answer = result ?? {};
      if (CHECK_CONTRACT) {
        const broken = contractRefusal(opts.response, JSON.parse(JSON.stringify(answer)), req, requestId);
        if (broken) return broken;
      }
      return NextResponse.json(answer, { status });
    } catch (e) {
      const d = domainErrorOf(e);
      if (d) return domainResponse(d);
      if (isTransientDbError(e)) return overloadedResponse();
      if (e instanceof LashInputError) {
        const fields = fieldErrors(e.issues);
        return errorResponse(422, "invalid", e.message, Object.keys(fields).length ? fields : undefined);
      }
      log.error({ err: e, requestId, method: req.method, path: req.nextUrl.pathname }, "request failed");
      return errorResponse(500, "internal", `Something went wrong on the server (request ${requestId})`);
    }
  }
}

export const uuidParam = z.string().regex(ID_PATTERN);

export function page<T>(items: T[], limit: number, offset: number) {
  // one extra row was fetched to know whether another page exists
  const more = items.length > limit;
  return { items: items.slice(0, limit), nextOffset: more ? offset + limit : null };
}
