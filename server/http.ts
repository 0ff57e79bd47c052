import "server-only";
import { NextResponse, type NextRequest } from "next/server";
import { z, ZodError } from "zod";
import { LashInputError } from "@/lib/lash";
import { Refused } from "@/db/errors";
import { currentUser, type SessionUser } from "./auth";

/**
 * The one place that turns a request into validated input and an error into the error shape
 * `{ error: { code, message, fields? } }`. Every route handler is built with `route()`.
 */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields?: Record<string, string>,
  ) {
    super(message);
  }
}

export const notFound = (what = "record") => new ApiError(404, "not_found", `No such ${what}`);
export const forbidden = (message = "You may read this but not change it") => new ApiError(403, "forbidden", message);
export const conflict = (message: string) => new ApiError(409, "conflict", message);

const MAX_BODY_BYTES = 256 * 1024;

function errorResponse(status: number, code: string, message: string, fields?: Record<string, string>) {
  return NextResponse.json({ error: fields ? { code, message, fields } : { code, message } }, { status });
}

function fieldsFromZod(e: ZodError): Record<string, string> {
  const fields: Record<string, string> = {};
  for (const i of e.issues) {
    const key = i.path.map(String).join(".") || "_";
    fields[key] ??= i.message;
  }
  return fields;
}

type Ctx<P, Q, B, A extends boolean> = { req: NextRequest; params: P; query: Q; body: B; user: A extends true ? SessionUser : SessionUser | null };

interface RouteOptions<P extends z.ZodType, Q extends z.ZodType, B extends z.ZodType, A extends boolean> {
  params?: P;
  query?: Q;
  body?: B;
  /** default true: anonymous callers get 401 */
  auth?: A;
  /** status of a successful answer (default 200; 204 sends no body) */
  status?: number;
}

export function route<P extends z.ZodType = z.ZodType<Record<string, never>>, Q extends z.ZodType = z.ZodType<Record<string, never>>, B extends z.ZodType = z.ZodType<undefined>, A extends boolean = true>(
  opts: RouteOptions<P, Q, B, A>,
  fn: (ctx: Ctx<z.output<P>, z.output<Q>, z.output<B>, A>) => Promise<unknown>,
) {
  return async (req: NextRequest, ctx: { params: Promise<Record<string, string | string[]>> }) => {
    const requestId = crypto.randomUUID().slice(0, 8);
    try {
      const user = await currentUser();
      if (opts.auth !== false && !user) return errorResponse(401, "unauthorized", "Sign in first");
      const rawParams = ctx?.params ? await ctx.params : {};
      const params = opts.params ? opts.params.safeParse(rawParams) : { success: true as const, data: rawParams };
      // A malformed id is just an id that names nothing.
      if (!params.success) return errorResponse(404, "not_found", "No such record");
      const query = opts.query ? opts.query.safeParse(Object.fromEntries(req.nextUrl.searchParams)) : { success: true as const, data: {} };
      if (!query.success) return errorResponse(422, "invalid", "The query string is not valid", fieldsFromZod(query.error));
      let body: unknown = undefined;
      if (opts.body) {
        const text = await req.text();
        if (Buffer.byteLength(text) > MAX_BODY_BYTES) return errorResponse(413, "too_large", `The body is over ${MAX_BODY_BYTES / 1024} KiB`);
        let json: unknown;
        try {
          json = text === "" ? undefined : JSON.parse(text);
        } catch {
          return errorResponse(400, "bad_json", "The body is not valid JSON");
        }
        const parsed = opts.body.safeParse(json);
        if (!parsed.success) {
          const fields = fieldsFromZod(parsed.error);
          const first = Object.entries(fields)[0];
          return errorResponse(422, "invalid", first ? `${first[0]}: ${first[1]}` : "The body is not valid", fields);
        }
        body = parsed.data;
      }
      const result = await fn({ req, params: params.data, query: query.data, body, user } as Ctx<z.output<P>, z.output<Q>, z.output<B>, A>);
      if (result instanceof Response) return result;
      const status = opts.status ?? 200;
      if (status === 204) return new NextResponse(null, { status });
      return NextResponse.json(result ?? {}, { status });
    } catch (e) {
      if (e instanceof ApiError) return errorResponse(e.status, e.code, e.message, e.fields);
      if (e instanceof Refused) return errorResponse(e.status, e.status === 404 ? "not_found" : "conflict", e.message);
      if (e instanceof LashInputError) {
        const fields = Object.fromEntries(e.issues.map((i) => [i.path || "_", i.message]));
        return errorResponse(422, "invalid", e.message, Object.keys(fields).length ? fields : undefined);
      }
      console.error(`[api ${requestId}] ${req.method} ${req.nextUrl.pathname} failed:`, e instanceof Error ? e.message : e);
      return errorResponse(500, "internal", `Something went wrong on the server (request ${requestId})`);
    }
  };
}

export const uuidParam = z.string().regex(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/);

// plain decimal digits only: Number() would also take "0x10", "1e3" or " 7 "
const digits = z.string().regex(/^\d{1,7}$/, { error: "a whole number" }).transform(Number);
export const pageQuery = z.object({
  limit: digits.pipe(z.number().int().min(1).max(200)).default(50),
  offset: digits.pipe(z.number().int().min(0).max(1_000_000)).default(0),
});

export function page<T>(items: T[], limit: number, offset: number) {
  // one extra row was fetched to know whether another page exists
  const more = items.length > limit;
  return { items: items.slice(0, limit), nextOffset: more ? offset + limit : null };
}
