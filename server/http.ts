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

interface RouteOptions<P extends z.ZodType, Q extends z.ZodType, B extends z.ZodType, A extends boolean> {
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
>(opts: RouteOptions<P, Q, B, A>, fn: (ctx: Ctx<z.output<P>, z.output<Q>, z.output<B>, A>) => Promise<unknown>) {
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
      // (lib/sync/client.ts); only a cookie signed by us can earn it (OWASP ASVS 5.0 V7)
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
      if (result instanceof Response) return result;
      const status = opts.status ?? 200;
      if (status === 204) return new NextResponse(null, { status });
      return NextResponse.json(result ?? {}, { status });
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

// plain decimal digits only: Number() would also take "0x10", "1e3" or " 7 "
const digits = z
  .string()
  .regex(/^\d{1,7}$/, { error: "a whole number" })
  .transform(Number);
export const pageQuery = z.object({
  limit: digits.pipe(z.number().int().min(1).max(200)).default(50),
  offset: digits.pipe(z.number().int().min(0).max(1_000_000)).default(0),
});

export function page<T>(items: T[], limit: number, offset: number) {
  // one extra row was fetched to know whether another page exists
  const more = items.length > limit;
  return { items: items.slice(0, limit), nextOffset: more ? offset + limit : null };
}
