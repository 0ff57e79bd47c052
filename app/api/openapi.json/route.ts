import { NextResponse } from "next/server";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { openApiDocument } from "@/server/openapi";

/**
 * The API described as OpenAPI 3.1, generated from the contract the routes answer by: public, so a
 * club's own tools can read it without signing in, and the same for everyone, so it may be kept.
 */
export const GET = route({ response: answers.openapi, auth: false, session: false }, async () =>
  NextResponse.json(openApiDocument(), { headers: { "cache-control": "public, max-age=3600" } }),
);
