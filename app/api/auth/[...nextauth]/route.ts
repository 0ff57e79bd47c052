import NextAuth from "next-auth";
import { NextRequest, NextResponse } from "next/server";
import { authOptions, currentSession, SIGN_IN_ERRORS } from "@/server/auth";
import { errorBody, errorResponse } from "@/server/http";
import { hashRefusals, type HashWatch } from "@/server/password";
import { BodyTooLarge, readBody, sameOriginRefusal } from "@/server/request-guard";

const handler = NextAuth(authOptions);

// next-auth's forms are a few fields: 16 KiB is ample, and the body is counted before next-auth reads it
const MAX_AUTH_BODY = 16 * 1024;

async function post(req: NextRequest, ctx: { params: Promise<{ nextauth: string[] }> }) {
  const refused = sameOriginRefusal(req);
  if (refused) return errorResponse(403, refused.extra.code ?? "forbidden", refused.message);
  let body: Uint8Array<ArrayBuffer>;
  try {
    body = await readBody(req, MAX_AUTH_BODY);
  } catch (e) {
    if (e instanceof BodyTooLarge) return errorResponse(413, "too_large", e.message);
    throw e;
  }
  const hashing: HashWatch = { retryAfterSeconds: null, undo: [] };
  const res: Response = await hashRefusals.run(hashing, () =>
    handler(new NextRequest(req.url, { method: "POST", headers: req.headers, body }), ctx),
  );
  if (hashing.retryAfterSeconds === null) return res;
  await Promise.all(hashing.undo.map((f) => f()));
  // The password could not be checked: the hashing queue was full. 503 with Retry-After (the tries
  // counted for it were given back), with the url next-auth's client reads the error from ("Busy" on the page).
  const url = new URL("/sign-in", req.nextUrl.origin);
  url.searchParams.set("error", SIGN_IN_ERRORS.busy);
  const message = "Too many sign-ins at once: try again in a moment";
  return NextResponse.json(
    { ...errorBody("overloaded", message), url: url.toString() },
    { status: 503, headers: { "Retry-After": String(hashing.retryAfterSeconds) } },
  );
}

/**
 * The phone asks /api/auth/session on every page. A cookie minted before a sign-out everywhere or a
 * new password shows no user (next-auth's jwt callback refuses it too) and answers { revoked: true },
 * the phone's signal to wipe its local copy (components/sync/local-provider.tsx). The cookie is left
 * as it is: it opens nothing, and it keeps telling the phone until the wipe is done.
 */
async function get(req: NextRequest, ctx: { params: Promise<{ nextauth: string[] }> }) {
  if (req.nextUrl.pathname === "/api/auth/session" && (await currentSession()).revoked)
    return NextResponse.json({ revoked: true }, { headers: { "cache-control": "private, no-cache, no-store" } });
  return handler(req, ctx);
}

export { get as GET, post as POST };
