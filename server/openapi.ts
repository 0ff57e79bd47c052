import "server-only";
import { OpenAPIRegistry, OpenApiGeneratorV31, type RouteConfig } from "@asteasolutions/zod-to-openapi";
import { z } from "zod";
import { endpoints, errorShape, noContent, notJson, type Endpoint } from "@/lib/api/contract";
import { idSchema } from "@/lib/schemas/records";

/**
 * The API as an OpenAPI 3.1 document, generated from the contract (lib/api/contract.ts): the same
 * schemas the routes parse with and the test servers check every answer against, so the document
 * cannot drift from what the server does. Served by GET /api/openapi.json for a club's own tools.
 */

const SESSION = "session";

const REFUSALS: Record<string, string> = {
  "400": "Not valid JSON, or a link that is not valid",
  "401": "Not signed in (code session_revoked: the session was ended elsewhere)",
  "403": "Not yours to read or change, or not sent from our own pages",
  "404": "No such record",
  "409": "A conflict with the stored state, or refused by a rule",
  "422": "The input is not valid: `fields` names each field and what is wrong",
  "429": "A budget is spent: try again after Retry-After seconds",
  "503": "The server is busy: nothing was applied; try again after Retry-After seconds",
};

/** "/api/checks/{checkId}" names its parameters: every id in a path is a record's uuid. */
function pathParams(path: string) {
  const names = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]!);
  if (names.length === 0) return undefined;
  // next-auth's catch-all is its own words (session, csrf, callback/credentials, ...)
  return z.object(Object.fromEntries(names.map((n) => [n, n === "nextauth" ? z.string() : idSchema])));
}

function operation(ep: Endpoint): RouteConfig {
  const body =
    ep.body !== undefined
      ? { content: { "application/json": { schema: ep.body } }, required: true }
      : ep.bodyType !== undefined
        ? { content: { [ep.bodyType]: { schema: ep.form ?? z.string().meta({ format: "binary" }) } }, required: true }
        : undefined;
  const success =
    ep.response === noContent
      ? { description: "Done; no body" }
      : ep.response === notJson
        ? {
            description: ep.status === 303 ? "See Other: leads to a page" : "The file",
            ...(ep.responseType
              ? { content: { [ep.responseType]: { schema: z.string().meta({ format: "binary" }) } } }
              : {}),
          }
        : { description: "Success", content: { "application/json": { schema: ep.response } } };
  const refusals = Object.fromEntries(
    Object.entries(REFUSALS)
      .filter(([status]) => ep.auth || status !== "401")
      .map(([status, description]) => [
        status,
        { description, content: { "application/json": { schema: errorShape } } },
      ]),
  );
  return {
    method: ep.method.toLowerCase() as RouteConfig["method"],
    path: ep.path,
    summary: ep.summary,
    operationId: `${ep.method.toLowerCase()}${ep.path.replace(/^\/api/, "").replace(/[^A-Za-z0-9]+(\w)?/g, (_, c?: string) => (c ?? "").toUpperCase())}`,
    ...(ep.auth ? { security: [{ [SESSION]: [] }] } : { security: [] }),
    request: {
      params: pathParams(ep.path),
      query: ep.query as z.ZodObject | undefined,
      body,
    },
    responses: { [String(ep.status)]: success, ...refusals },
  };
}

let built: ReturnType<OpenApiGeneratorV31["generateDocument"]> | undefined;

/** The document, made once per process (the contract does not change while it runs). */
export function openApiDocument() {
  if (built) return built;
  const registry = new OpenAPIRegistry();
  registry.registerComponent("securitySchemes", SESSION, {
    type: "apiKey",
    in: "cookie",
    name: "__Secure-next-auth.session-token",
    description:
      "The session cookie set by signing in at /api/auth/callback/credentials (next-auth.session-token over plain http)",
  });
  for (const ep of endpoints) registry.registerPath(operation(ep));
  built = new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: "3.1.0",
    info: {
      title: "Lashwright API",
      version: "1",
      description:
        "Valve clearance checks, shim trays and club reviews. Every refusal is `{ error: { code, message, fields?, requestId? } }`. " +
        "A call that changes anything must come from our own pages or carry our own `Origin` header.",
    },
    servers: [{ url: "/" }],
  });
  return built;
}
