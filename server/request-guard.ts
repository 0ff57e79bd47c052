import "server-only";
import type { NextRequest } from "next/server";
import { env } from "@/lib/env";
import { DomainError } from "@/lib/errors";

/**
 * What a request must be before anything reads it, kept apart from route() so the route helper
 * stays about parsing and errors. OWASP ASVS 5.0 V3 Web Frontend Security and V4 API and Web
 * Service: a state-changing request names its origin and its content type, and a body is counted
 * while it is read, never trusted from Content-Length.
 */

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** The origins this app answers on: the configured address and the one this request was sent to. */
function ownOrigins(req: NextRequest): string[] {
  const host = req.headers.get("x-forwarded-host") ?? req.headers.get("host");
  const proto = req.headers.get("x-forwarded-proto") ?? req.nextUrl.protocol.replace(/:$/, "");
  const out = [new URL(env().NEXTAUTH_URL).origin];
  if (host) out.push(`${proto}://${host}`);
  return out;
}

/**
 * A state-changing request must come from our own pages: Sec-Fetch-Site "same-origin", or an Origin
 * that is ours. Browsers send one or both on every such request and a page elsewhere cannot forge
 * them, so a cross-site form or fetch is refused before it is read (login and request forgery).
 */
export function sameOriginRefusal(req: NextRequest): DomainError | null {
  if (SAFE_METHODS.has(req.method)) return null;
  const site = req.headers.get("sec-fetch-site");
  const origin = req.headers.get("origin");
  if (site === "same-origin") return null;
  if (site !== "cross-site" && site !== "same-site" && origin && ownOrigins(req).includes(origin)) return null;
  return new DomainError("forbidden", "This change must come from Lashwright's own pages", { code: "cross_site" });
}

/** A body must be sent as `kind`: JSON for every route with a body, multipart for photos, a zip for an account import. */
export function contentTypeRefusal(req: NextRequest, kind: "json" | "multipart" | "zip"): DomainError | null {
  const type = (req.headers.get("content-type") ?? "").split(";")[0]!.trim().toLowerCase();
  const want = kind === "json" ? "application/json" : kind === "zip" ? "application/zip" : "multipart/form-data";
  return type === want
    ? null
    : new DomainError("unsupported", `Send the body as ${want}`, { code: "unsupported_type" });
}

export class BodyTooLarge extends DomainError {
  constructor(readonly limit: number) {
    super("too_large", `The body is over ${Math.round(limit / 1024)} KiB`);
  }
}

/**
 * The body, read chunk by chunk and abandoned as soon as it passes `limit` bytes, whatever
 * Content-Length said (a chunked body has none): memory per request stays under the limit.
 */
export async function readBody(req: Request, limit: number): Promise<Uint8Array<ArrayBuffer>> {
  const declared = Number(req.headers.get("content-length") ?? NaN);
  if (declared > limit) throw new BodyTooLarge(limit);
  if (!req.body) return new Uint8Array(new ArrayBuffer(0));
  const reader = req.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > limit) {
      await reader.cancel().catch(() => undefined);
      throw new BodyTooLarge(limit);
    }
    chunks.push(value);
  }
  const out = new Uint8Array(new ArrayBuffer(size));
  let at = 0;
  for (const c of chunks) {
    out.set(c, at);
    at += c.byteLength;
  }
  return out;
}

/** A multipart form (and nothing else) read within `limit` bytes: the photo route's, after its access check. */
export async function readForm(req: NextRequest, limit: number): Promise<FormData> {
  const wrongType = contentTypeRefusal(req, "multipart");
  if (wrongType) throw wrongType;
  const bytes = await readBody(req, limit);
  return new Response(bytes, { headers: { "content-type": req.headers.get("content-type") ?? "" } }).formData();
}
