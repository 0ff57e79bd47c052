import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import { Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { cameraJpeg, photoForm } from "../../support/photos";
import { routesOnDisk } from "../../support/routes";
import { startApp, type App } from "../../support/server";

/**
 * Fuzzing every API route with fast-check (fixed seed). Bodies are valid examples with one value
 * swapped for a wrong-typed or hostile one (so each is certainly invalid), or not JSON at all, or
 * too large; path ids and query strings are hostile too. Every answer must be below 500, carry the
 * error shape when it is 4xx, and leave the database exactly as it was (CHECKSUM TABLE of every
 * table except the notice queue, which the server's own retry timer works on in the background, and
 * the budgets' counters, which its sending of those notices spends).
 */
const SEED = 20261202;
const RUNS = Number(process.env.LASHWRIGHT_FUZZ_RUNS ?? 60);

type Ids = Record<
  "engineId" | "checkId" | "shareId" | "itemId" | "clubId" | "userId" | "photoId" | "offerId" | "borrowId",
  string
>;
let app: App;
let owner: Client;
let ids: Ids;
let tables: string[];
let tried = 0;

// valid bodies, one per route that takes one; the fuzzer breaks them
const EXAMPLES: Record<string, (i: Ids) => unknown> = {
  "POST /api/account/sign-up": () => ({ email: "fuzz@test.example", name: "Fuzz", password: "long-enough-1" }),
  "POST /api/account/verify": () => ({ token: "A".repeat(43) }),
  "POST /api/account/verify/resend": () => ({ email: "fuzz@test.example" }),
  "POST /api/account/password-reset": () => ({ email: "fuzz@test.example" }),
  "POST /api/account/password": () => ({ token: "B".repeat(43), password: "long-enough-2" }),
  "POST /api/account/sign-in-link": () => ({ email: "fuzz@test.example" }),
  "POST /api/account/sign-in-link/account": () => ({ token: "B".repeat(43) }),
  "PATCH /api/account": () => ({ name: "Fuzz", displayUnit: "mm", noticesByEmail: true }),
  "POST /api/engines": () => ENGINE_FOUR,
  "PATCH /api/engines/:engineId": () => ({ name: "Renamed", intake: { min: 0.1, max: 0.2 }, cylinders: 4 }),
  "POST /api/engines/:engineId/checks": () => ({ odometer: 100, measuredHot: false, notes: "cold" }),
  "PATCH /api/checks/:checkId": () => ({ notes: "n", status: "planned", odometer: 5 }),
  "PUT /api/checks/:checkId/readings": () => ({
    readings: [{ valve: "I1.1", round: 0, installedStamp: 2.6, feelerGo: 0.15, feelerNoGo: 0.18 }],
  }),
  "POST /api/checks/:checkId/shares": (i) => ({ clubId: i.clubId }),
  "POST /api/checks/:checkId/comments": () => ({ body: "fine", valve: "E2.1" }),
  "PUT /api/shares/:shareId/verdict": () => ({ verdict: "close-up" }),
  "POST /api/tray": () => ({ size: 2.55, count: 1, measuredSize: false }),
  "PATCH /api/tray/:itemId": () => ({ count: 3, size: 2.6 }),
  "POST /api/clubs": () => ({ name: "Club" }),
  "PUT /api/clubs/:clubId/members/:userId": () => ({ roles: ["mechanic"] }),
  "POST /api/clubs/:clubId/invites": () => ({ email: "inv@test.example", role: "mentor" }),
  "POST /api/sync/push": () => ({ clientId: crypto.randomUUID(), mutations: [] }),
  "POST /api/sync/pull": () => ({ cursor: 0 }),
  "POST /api/invites/accept": () => ({ token: "C".repeat(43) }),
  // the token is in the query string (a mail provider's one-click POST); the body is never read
  "POST /api/notices/unsubscribe": () => ({ token: "C".repeat(43) }),
  "POST /api/clubs/:clubId/pool": () => ({ size: 2.6, count: 1, shimDiameter: 9.48, note: "bench" }),
  "POST /api/borrows": (i) => ({ offerId: i.offerId, count: 1 }),
  "PUT /api/borrows/:borrowId": () => ({ move: "agree" }),
  "POST /api/account/export": () => ({}),
  // the body is a zip (application/zip): anything sent as JSON or a form is refused before it is read
  "POST /api/account/import": () => ({}),
  // takes no body; the fuzzing account has a password, so it is refused (409) whatever is sent
  "POST /api/account/deletion/link": () => ({}),
};
const SKIP = new Set(["GET /api/auth/:nextauth", "POST /api/auth/:nextauth"]);
const MULTIPART = new Set(["POST /api/checks/:checkId/photos"]);

const HOSTILE_STRINGS = [
  "' OR '1'='1",
  "'; DROP TABLE readings;--",
  "<script>alert(1)</script>",
  '"><img src=x onerror=alert(1)>',
  "\u0000",
  "NaN",
  "-Infinity",
  "1e309",
  "🔧🛵",
  "\u202eevil",
  "../../etc/passwd",
  "%00",
  "{{7*7}}",
  "${jndi:x}",
  "a".repeat(5000),
];
const hostileString = fc.oneof(fc.constantFrom(...HOSTILE_STRINGS), fc.string({ unit: "binary", maxLength: 40 }));
// numbers no field accepts: below zero, or beyond every limit
const hugeOrNegative = fc.constantFrom(-1, -0.05, -1e9, 1e308, Number.MAX_SAFE_INTEGER + 2, 2 ** 63);

/** A value of a different type from `v`, or out of range for a number. */
function wrongFor(v: unknown): fc.Arbitrary<unknown> {
  const anyObject = fc.dictionary(hostileString, hostileString, { maxKeys: 3 });
  if (typeof v === "string")
    return fc.oneof(hugeOrNegative, fc.boolean(), anyObject, fc.array(hostileString, { maxLength: 3 }));
  if (typeof v === "number")
    return fc.oneof(
      hostileString,
      hugeOrNegative.filter((n) => n !== v),
      anyObject,
      fc.constant("12"),
    );
  if (typeof v === "boolean") return fc.oneof(hostileString, hugeOrNegative, anyObject);
  if (Array.isArray(v)) return fc.oneof(hostileString, anyObject, hugeOrNegative);
  return fc.oneof(hostileString, hugeOrNegative, fc.array(hostileString, { maxLength: 2 }));
}

/** Every path to a value in an example body. */
function leaves(v: unknown, at: (string | number)[] = []): (string | number)[][] {
  if (v && typeof v === "object" && !(Array.isArray(v) && v.length === 0) && !(Object.keys(v).length === 0)) {
    const kids = Array.isArray(v)
      ? v.map((x, i) => leaves(x, [...at, i]))
      : Object.entries(v).map(([k, x]) => leaves(x, [...at, k]));
    return [at, ...kids.flat()].filter((p) => p.length > 0);
  }
  return [at];
}

function replaceAt(v: unknown, path: (string | number)[], value: unknown): unknown {
  if (path.length === 0) return value;
  const [h, ...rest] = path;
  const copy = (Array.isArray(v) ? [...v] : { ...(v as object) }) as Record<string | number, unknown>;
  copy[h!] = replaceAt(copy[h!], rest, value);
  return copy;
}

function getAt(v: unknown, path: (string | number)[]): unknown {
  return path.reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], v);
}

type Sent = { kind: "json"; body: unknown } | { kind: "raw"; text: string; type: string };

function badBody(example: unknown): fc.Arbitrary<Sent> {
  const paths = leaves(example);
  const broken = fc
    .constantFrom(...paths)
    .chain((p) => wrongFor(getAt(example, p)).map((w) => ({ kind: "json" as const, body: replaceAt(example, p, w) })));
  const notAnObject = fc
    .oneof(fc.array(hostileString, { maxLength: 3 }), hostileString, hugeOrNegative, fc.constant(null))
    .map((body) => ({ kind: "json" as const, body }));
  const notJson = fc
    .oneof(
      hostileString.map((t) => `{${t}`),
      fc.constant('{"a": NaN}'),
      fc.constant('{"size": -Infinity}'),
    )
    .map((text) => ({ kind: "raw" as const, text, type: "application/json" }));
  const wrongType = hostileString.map((text) => ({
    kind: "raw" as const,
    text: `size=${encodeURIComponent(text)}`,
    type: "application/x-www-form-urlencoded",
  }));
  const tooBig = fc.constant({
    kind: "raw" as const,
    text: JSON.stringify({ name: "x".repeat(300 * 1024) }),
    type: "application/json",
  });
  return fc.oneof(
    { weight: 6, arbitrary: broken },
    { weight: 1, arbitrary: notAnObject },
    { weight: 1, arbitrary: notJson },
    { weight: 1, arbitrary: wrongType },
    { weight: 1, arbitrary: tooBig },
  );
}

// names every JavaScript object inherits: a lookup by `in` or `obj[name]` finds them (issue 24 item 10)
const PROTOTYPE_NAMES = [
  "constructor",
  "__proto__",
  "toString",
  "hasOwnProperty",
  "valueOf",
  "isPrototypeOf",
  "propertyIsEnumerable",
  "toLocaleString",
  "__defineGetter__",
  "__lookupSetter__",
  "prototype",
];

const hostileId = fc.oneof(
  fc.constantFrom(
    "1 OR 1=1",
    "..%2F..%2Fetc",
    "%27%3B--",
    "00000000-0000-0000-0000-00000000000g",
    "NaN",
    "-1",
    "9".repeat(40),
    "%F0%9F%94%A7",
  ),
  fc.uuid().map((u) => u.toUpperCase()),
  fc.uuid(),
);

async function checksum(except: string[] = []): Promise<string> {
  const c = await rawConnection();
  const [rows] = await c.query(
    `CHECKSUM TABLE ${tables
      .filter((t) => !except.includes(t))
      .map((t) => `\`${t}\``)
      .join(", ")}`,
  );
  await c.end();
  return (rows as { Table: string; Checksum: number }[]).map((r) => `${r.Table}:${r.Checksum}`).join(" ");
}

function fill(route: string, i: Ids, id?: string) {
  return route
    .split(" ")[1]!
    .replace(/:(\w+)/g, (_, k: string) => id ?? i[(k === "nextauth" ? "engineId" : k) as keyof Ids]);
}

async function send(route: string, path: string, sent: Sent | undefined) {
  const method = route.split(" ")[0]!;
  tried++;
  if (!sent) return owner.call(method, path);
  if (sent.kind === "json") return owner.call(method, path, sent.body);
  const res = await owner.raw(method, path, { body: sent.text, headers: { "content-type": sent.type } });
  const text = await res.text();
  let json: Record<string, unknown> | null = null;
  try {
    json = JSON.parse(text) as Record<string, unknown>;
  } catch {
    /* not JSON */
  }
  return { status: res.status, json };
}

function expectRefused(res: { status: number; json: Record<string, unknown> | null }, what: string) {
  expect(res.status, what).toBeGreaterThanOrEqual(400);
  expect(res.status, what).toBeLessThan(500);
  expect(res.json?.error, `${what}: error shape`).toMatchObject({
    code: expect.any(String),
    message: expect.any(String),
  });
}

beforeAll(async () => {
  app = await startApp();
  const [o, m, member] = await Promise.all([makeUser("fuzz-owner"), makeUser("fuzz-mentor"), makeUser("fuzz-member")]);
  owner = new Client(app.url);
  expect(await owner.signIn("password", { email: o!.email, password: o!.password })).toBeNull();
  const clubId = (await owner.post("/api/clubs", { name: "Fuzz Club" })).json.club.id as string;
  await addMembership(clubId, m!.id, ["mentor"]);
  await addMembership(clubId, member!.id, ["mechanic"]);
  const engineId = (await owner.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await owner.post(`/api/engines/${engineId}/checks`, { odometer: 1 })).json.check.id as string;
  const shareId = (await owner.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
  const itemId = (await owner.post("/api/tray", { size: 2.6, count: 2 })).json.item.id as string;
  const photoId = (await owner.form("POST", `/api/checks/${checkId}/photos`, photoForm(await cameraJpeg(200, 150))))
    .json.photo.id as string;
  // an offer of the mentor's and the owner's request on it, for the loan routes
  const mentor = new Client(app.url);
  expect(await mentor.signIn("password", { email: m!.email, password: m!.password })).toBeNull();
  await mentor.post("/api/tray", { size: 2.6, count: 2 });
  const offerId = (await mentor.post(`/api/clubs/${clubId}/pool`, { size: 2.6, count: 2 })).json.offer.id as string;
  const borrowId = (await owner.post("/api/borrows", { offerId, count: 1 })).json.borrow.id as string;
  ids = { engineId, checkId, shareId, itemId, clubId, userId: member!.id, photoId, offerId, borrowId };
  const c = await rawConnection();
  const [rows] = await c.query(
    "SELECT table_name AS t FROM information_schema.tables WHERE table_schema = DATABASE() AND table_name NOT IN ('notices', 'rate_limits', '__drizzle_migrations')",
  );
  await c.end();
  tables = (rows as { t: string }[]).map((r) => r.t).sort();
}, 120_000);
afterAll(() => app?.stop());

describe("fuzzing the API", () => {
  const routes = routesOnDisk().filter((r) => !SKIP.has(r));

  it("has an example body for every route that takes one", () => {
    const bodyRoutes = routes.filter((r) => /^(POST|PUT|PATCH) /.test(r) && !MULTIPART.has(r));
    expect(bodyRoutes.filter((r) => !EXAMPLES[r])).toEqual([]);
  });

  it(
    "bad bodies, hostile ids and query strings: always a 4xx with the error shape, never a change",
    { timeout: 600_000 },
    async () => {
      const before = await checksum();
      for (const route of routes) {
        const [method] = route.split(" ");
        const example = EXAMPLES[route];
        if (example) {
          await fc.assert(
            fc.asyncProperty(badBody(example(ids)), async (sent) => {
              expectRefused(await send(route, fill(route, ids), sent), route);
            }),
            { seed: SEED, numRuns: RUNS },
          );
        }
        if (MULTIPART.has(route)) {
          // not a form, or a form whose file is not a picture or whose fields are hostile
          await fc.assert(
            fc.asyncProperty(hostileString, hostileString, async (field, content) => {
              expectRefused(await send(route, fill(route, ids), { kind: "json", body: { file: content } }), route);
              const form = new FormData();
              form.set("id", field);
              form.set("valve", field);
              form.set("file", new Blob([content], { type: "image/jpeg" }), "x.jpg");
              tried++;
              expectRefused(await owner.form("POST", fill(route, ids), form), `${route} form`);
            }),
            { seed: SEED, numRuns: RUNS },
          );
        }
        if (route.includes(":")) {
          // a hostile id in the path names nothing, whatever the method (and DELETE only ever gets these)
          await fc.assert(
            fc.asyncProperty(hostileId, async (id) => {
              const sent = example ? ({ kind: "json", body: example(ids) } as const) : undefined;
              const res = await send(
                route,
                fill(route, ids, id),
                method === "GET" || method === "DELETE" ? undefined : sent,
              );
              expect(res.status, route).toBe(404);
              expectRefused(res, route);
            }),
            { seed: SEED, numRuns: Math.ceil(RUNS / 2) },
          );
        }
      }
      // list routes: broken paging parameters are refused with the field named
      for (const route of routes.filter((r) =>
        ["GET /api/engines", "GET /api/tray", "GET /api/engines/:engineId/checks"].includes(r),
      )) {
        await fc.assert(
          fc.asyncProperty(
            fc.oneof(
              fc.tuple(
                fc.constantFrom("limit", "offset"),
                hostileString.filter((s) => !/^\s*\d+\s*$/.test(s) && s.trim() !== ""),
              ),
              fc.tuple(fc.constant("limit"), fc.constantFrom("-1", "0", "1e999", "0x10", "201")),
              fc.tuple(fc.constant("offset"), fc.constantFrom("-1", "1e999", "0x10", "2000000")),
            ),
            async ([key, value]) => {
              const res = await send(route, `${fill(route, ids)}?${key}=${encodeURIComponent(value)}`, undefined);
              expectRefused(res, `${route}?${key}=${value}`);
            },
          ),
          { seed: SEED, numRuns: RUNS },
        );
      }
      expect(await checksum()).toBe(before);
      console.log(
        `[fuzz] ${tried} hostile requests over ${routes.length} routes: every one refused with a 4xx and the error shape; the database unchanged`,
      );
    },
  );

  it(
    "mutation names that are prototype names or hostile strings: each refused as an unknown change, never a 500, no record changed",
    { timeout: 300_000 },
    async () => {
      // a push of unknown names is answered 200 with each refused (as the phone expects of any name it
      // cannot know): the device's row, the refusals and the write budget change, the records do not
      // (and the owner's change counter, taken before the push knows every change will be refused)
      const bookkeeping = ["sync_clients", "rejected_mutations", "rate_limits", "owner_versions"];
      const before = await checksum(bookkeeping);
      const args = fc.oneof(
        fc.constant({}),
        fc.constant(null),
        fc.dictionary(fc.constantFrom(...PROTOTYPE_NAMES), fc.oneof(hostileString, fc.constant({ polluted: true })), {
          maxKeys: 3,
        }),
        hostileString,
      );
      const mutationName = fc.oneof(
        fc.constantFrom(...PROTOTYPE_NAMES),
        hostileString.map((t) => t.slice(0, 60)),
      );
      let sent = 0;
      await fc.assert(
        fc.asyncProperty(fc.array(fc.tuple(mutationName, args), { minLength: 1, maxLength: 5 }), async (ms) => {
          const mutations = ms.map(([name, a], i) => ({ id: i + 1, name, args: a }));
          const res = await owner.raw("POST", "/api/sync/push", {
            body: JSON.stringify({ clientId: crypto.randomUUID(), mutations }),
            headers: { "content-type": "application/json" },
          });
          sent++;
          // many runs (LASHWRIGHT_FUZZ_RUNS) may spend the account's write budget: a 429 is an answer too
          if (res.status === 429) return void expect(res.headers.get("retry-after")).toMatch(/^\d+$/);
          expect(res.status, `push of ${JSON.stringify(ms.map(([n]) => n))}`).toBe(200);
          const json = (await res.json()) as { rejected: { id: number; reason: string }[] };
          expect(json.rejected.map((r) => r.id)).toEqual(mutations.map((m) => m.id));
          for (const r of json.rejected) expect(r.reason).toMatch(/^unknown change/);
        }),
        { seed: SEED, numRuns: RUNS },
      );
      expect(await checksum(bookkeeping)).toBe(before);
      expect(({} as Record<string, unknown>).polluted).toBeUndefined();
      console.log(
        `[fuzz] ${sent} pushes naming prototype names and hostile strings: every mutation refused as unknown, no record changed`,
      );
    },
  );
});
