import { afterAll, beforeAll, describe, expect, it } from "vitest";
// JSON Schema 2020-12 is the dialect of OpenAPI 3.1's schema objects
import Ajv2020 from "ajv/dist/2020";
import { Client, signedInClient } from "../../support/api";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { routesOnDisk } from "../../support/routes";
import { startApp, type App } from "../../support/server";

/**
 * GET /api/openapi.json: a well-formed OpenAPI 3.1 document, generated from the contract
 * (lib/api/contract.ts), naming every route file's methods, so a route added without its contract
 * fails here. The schemas it publishes are checked to be valid JSON Schema and to accept what the
 * server really sends.
 */
type Json = Record<string, unknown>;
const METHODS = ["get", "put", "post", "delete", "options", "head", "patch", "trace"];

let app: App;
let doc: Json;
let res: Response;

beforeAll(async () => {
  app = await startApp();
  res = await new Client(app.url).raw("GET", "/api/openapi.json");
  doc = (await res.clone().json()) as Json;
});
afterAll(async () => {
  await app?.stop();
});

/** "GET /api/checks/:checkId" as the document writes it: method and "/api/checks/{checkId}". */
const inDocument = (route: string) => {
  const [method, path] = route.split(" ");
  return { method: method!.toLowerCase(), path: path!.replace(/:(\w+)/g, "{$1}") };
};
const operations = () =>
  Object.entries(doc.paths as Record<string, Json>).flatMap(([path, item]) =>
    Object.keys(item)
      .filter((k) => METHODS.includes(k))
      .map((method) => ({ path, method, op: item[method] as Json })),
  );

describe("the OpenAPI document", () => {
  it("is public and may be kept", () => {
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toMatch(/^application\/json/);
    expect(res.headers.get("cache-control")).toMatch(/public/);
  });

  it("is OpenAPI 3.1 with the required fields (OpenAPI 3.1.0 section 4.8.1)", () => {
    expect(doc.openapi).toMatch(/^3\.1\.\d+$/);
    const info = doc.info as Json;
    expect(typeof info.title).toBe("string");
    expect(typeof info.version).toBe("string");
    expect(Object.keys(doc.paths as Json).length).toBeGreaterThan(0);
    for (const path of Object.keys(doc.paths as Json)) expect(path).toMatch(/^\/api\//);
  });

  it("has, for every operation, responses keyed by status, unique operation ids and its path's parameters", () => {
    const ids = new Set<string>();
    for (const { path, method, op } of operations()) {
      const where = `${method} ${path}`;
      const responses = op.responses as Json;
      expect(Object.keys(responses).length, where).toBeGreaterThan(0);
      for (const [status, r] of Object.entries(responses)) {
        expect(status, where).toMatch(/^([1-5]\d\d|[1-5]XX|default)$/);
        expect(typeof (r as Json).description, `${where} ${status}`).toBe("string");
      }
      expect(typeof op.operationId, where).toBe("string");
      expect(ids.has(op.operationId as string), `${where}: operationId repeated`).toBe(false);
      ids.add(op.operationId as string);
      // each {name} in the path is a parameter "in: path", required (OpenAPI 3.1.0 section 4.8.12.1)
      const params = ((op.parameters ?? []) as Json[]).filter((p) => p.in === "path");
      const named = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
      expect(params.map((p) => p.name).sort(), where).toEqual(named);
      for (const p of params) expect(p.required, `${where} ${String(p.name)}`).toBe(true);
    }
  });

  it("names every route file's methods, and nothing that is not on disk", () => {
    const documented = new Set(operations().map(({ method, path }) => `${method} ${path}`));
    const onDisk = routesOnDisk().map(inDocument);
    expect(onDisk.length).toBeGreaterThan(40);
    const missing = onDisk.filter(({ method, path }) => !documented.has(`${method} ${path}`));
    expect(missing, "routes without a contract (lib/api/contract.ts endpoints)").toEqual([]);
    const disk = new Set(onDisk.map(({ method, path }) => `${method} ${path}`));
    // next-auth's catch-all exports its handlers under other names; its entry is written by hand
    const stale = [...documented].filter((k) => !disk.has(k) && !k.includes("{nextauth}"));
    expect(stale, "documented routes with no route file").toEqual([]);
  });

  it("has only valid JSON Schemas whose references resolve, and they accept what the server sends", async () => {
    const ajv = new Ajv2020({ strict: false, validateFormats: false, allErrors: true });
    ajv.addSchema(doc, "doc");
    const pointer = (parts: string[]) =>
      "doc#/" + parts.map((p) => p.replace(/~/g, "~0").replace(/\//g, "~1")).join("/");
    let schemas = 0;
    // compiling a schema resolves its $refs: a dangling one throws
    const walk = (node: unknown, at: string[]) => {
      if (!node || typeof node !== "object") return;
      for (const [k, v] of Object.entries(node)) {
        if (k === "schema" && v && typeof v === "object") {
          expect(() => ajv.getSchema(pointer([...at, k])), [...at, k].join("/")).not.toThrow();
          schemas++;
        } else walk(v, [...at, k]);
      }
    };
    walk(doc.paths, ["paths"]);
    for (const name of Object.keys((doc.components as { schemas: Json }).schemas))
      expect(() => ajv.getSchema(pointer(["components", "schemas", name])), name).not.toThrow();
    expect(schemas).toBeGreaterThan(100);

    // a real answer against the published schema: an engine made and listed by its owner
    const owner = await makeUser("openapi");
    const c = await signedInClient(app.url, owner);
    expect((await c.call("POST", "/api/engines", ENGINE_FOUR)).status).toBe(201);
    const list = await c.call("GET", "/api/engines");
    expect(list.status).toBe(200);
    const validate = ajv.getSchema(
      pointer(["paths", "/api/engines", "get", "responses", "200", "content", "application/json", "schema"]),
    )!;
    expect(validate(list.json), JSON.stringify(validate.errors)).toBe(true);
    // and the refusal shape
    const refused = await new Client(app.url).call("GET", "/api/engines");
    const error = ajv.getSchema(pointer(["components", "schemas", "Error"]))!;
    expect(refused.status).toBe(401);
    expect(error(refused.json), JSON.stringify(error.errors)).toBe(true);
  });
});
