import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { cameraJpeg, photoForm } from "../../support/photos";
import { startApp, type App } from "../../support/server";
import { routesOnDisk } from "../../support/routes";

/**
 * The authorisation matrix: every route x every kind of caller, from one table. A route file that
 * is not in the table fails the coverage test below, so a new route cannot be left out.
 */
type Actor = "owner" | "stranger" | "mentor" | "otherMentor" | "admin" | "anon";
const ACTORS: Actor[] = ["owner", "stranger", "mentor", "otherMentor", "admin", "anon"];

interface Ids {
  engineId: string;
  checkId: string;
  shareId: string;
  trayId: string;
  clubId: string;
  memberId: string;
  photoId: string;
  offerId: string;
  borrowId: string;
  inviteId: string;
}

interface Row {
  route: string; // "METHOD /api/path/:param"
  path: (ids: Ids) => string;
  body?: (ids: Ids) => unknown;
  /** a multipart body instead (photos) */
  form?: (ids: Ids) => Promise<FormData>;
  /** make fresh records for a destructive call, one set per caller */
  fresh?: () => Promise<Partial<Ids>>;
  expect: Partial<Record<Actor, number>> & { others: number };
  /** a malformed body the owner (or the first allowed caller) sends: 422 naming this field */
  bad?: { as?: Actor; body: unknown; field: string };
}

let app: App;
const clients = {} as Record<Actor, Client>;
let ids: Ids;
let freshCheck: () => Promise<Partial<Ids>>;
let photo: Buffer;

async function signedIn(email: string, password: string) {
  const c = new Client(app.url);
  expect(await c.signIn("password", { email, password })).toBeNull();
  return c;
}

beforeAll(async () => {
  app = await startApp();
  const [owner, stranger, mentor, otherMentor, admin] = await Promise.all(
    ["owner", "stranger", "mentor", "other-mentor", "admin"].map((t) => makeUser(`matrix-${t}`)),
  );
  for (const [k, u] of Object.entries({ owner, stranger, mentor, otherMentor, admin }))
    clients[k as Actor] = await signedIn(u!.email, u!.password);
  clients.anon = new Client(app.url);

  const club = await clients.admin.post("/api/clubs", { name: "Matrix Club" });
  const clubId = club.json.club.id as string;
  await addMembership(clubId, owner!.id, ["mechanic"]);
  await addMembership(clubId, mentor!.id, ["mechanic", "mentor"]);
  const otherClub = await clients.otherMentor.post("/api/clubs", { name: "Elsewhere Club" });
  await addMembership(otherClub.json.club.id, otherMentor!.id, ["mentor"]);

  const o = clients.owner;
  const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  freshCheck = async () => {
    const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 12_000 })).json.check.id as string;
    const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
    return { checkId, shareId };
  };
  const { checkId, shareId } = (await freshCheck()) as { checkId: string; shareId: string };
  const trayId = (await o.post("/api/tray", { size: 2.6, count: 2 })).json.item.id as string;
  const member = await makeUser("matrix-member");
  await addMembership(clubId, member.id, ["mechanic"]);
  photo = await cameraJpeg(320, 240);
  const photoId = (await o.form("POST", `/api/checks/${checkId}/photos`, photoForm(photo))).json.photo.id as string;
  ids = {
    engineId,
    checkId,
    shareId,
    trayId,
    clubId,
    memberId: member.id,
    photoId,
    offerId: "",
    borrowId: "",
    inviteId: "",
  };
  Object.assign(ids, await freshLoan());
});
afterAll(() => app?.stop());

const freshEngine = async () => ({
  engineId: (await clients.owner.post("/api/engines", ENGINE_FOUR)).json.engine.id as string,
});
const freshTray = async () => ({
  trayId: (await clients.owner.post("/api/tray", { size: 2.7, count: 1 })).json.item.id as string,
});
const freshMember = async () => {
  const m = await makeUser("matrix-fresh-member");
  await addMembership(ids.clubId, m.id, ["mechanic"]);
  return { memberId: m.id };
};
// the owner offers 2.6 mm shims from the tray; the mentor (a club member) asks for one
const freshOffer = async () => {
  await clients.owner.post("/api/tray", { size: 2.6, count: 1 });
  return {
    offerId: (await clients.owner.post(`/api/clubs/${ids.clubId}/pool`, { size: 2.6, count: 1 })).json.offer
      .id as string,
  };
};
const freshLoan = async () => {
  const { offerId } = await freshOffer();
  return {
    offerId,
    borrowId: (await clients.mentor.post("/api/borrows", { offerId, count: 1 })).json.borrow.id as string,
  };
};
const freshPhoto = async () => ({
  photoId: (await clients.owner.form("POST", `/api/checks/${ids.checkId}/photos`, photoForm(photo))).json.photo
    .id as string,
});
const rand = () => crypto.randomUUID().slice(0, 8);
const freshInvite = async () => ({
  inviteId: (
    await clients.admin.post(`/api/clubs/${ids.clubId}/invites`, {
      email: `fresh-inv-${rand()}@test.example`,
      role: "mechanic",
    })
  ).json.invite.id as string,
});
const OWNER_ONLY = { owner: 0, others: 404, anon: 401 };
const CHECK_READ = { owner: 200, mentor: 200, others: 404, anon: 401 };
const CHECK_WRITE = (ok: number) => ({ owner: ok, mentor: 403, others: 404, anon: 401 });
const EVERYONE = (ok: number) => ({ others: ok, anon: 401 });
const PUBLIC = (s: number) => ({ others: s });

const TABLE: Row[] = [
  {
    route: "POST /api/account/sign-up",
    path: () => "/api/account/sign-up",
    body: () => ({ email: `m-${rand()}@test.example`, name: "M", password: "matrix-pass-123" }),
    expect: PUBLIC(202),
    bad: { as: "anon", body: { email: "x@test.example", name: "M", password: "1" }, field: "password" },
  },
  {
    route: "POST /api/account/verify",
    path: () => "/api/account/verify",
    body: () => ({ token: "A".repeat(43) }),
    expect: PUBLIC(400),
    bad: { as: "anon", body: { token: "<script>" }, field: "token" },
  },
  {
    route: "POST /api/account/verify/resend",
    path: () => "/api/account/verify/resend",
    body: () => ({ email: `r-${rand()}@test.example` }),
    expect: PUBLIC(202),
    bad: { as: "anon", body: { email: "not an address" }, field: "email" },
  },
  {
    route: "POST /api/account/sign-in-link/account",
    path: () => "/api/account/sign-in-link/account",
    body: () => ({ token: "D".repeat(43) }),
    expect: PUBLIC(400),
    bad: { as: "anon", body: { token: "<script>" }, field: "token" },
  },
  {
    route: "POST /api/account/password-reset",
    path: () => "/api/account/password-reset",
    body: () => ({ email: `n-${rand()}@test.example` }),
    expect: PUBLIC(202),
    bad: { as: "anon", body: { email: 42 }, field: "email" },
  },
  {
    route: "POST /api/account/password",
    path: () => "/api/account/password",
    body: () => ({ token: "B".repeat(43), password: "new-pass-12345" }),
    expect: PUBLIC(400),
    bad: { as: "anon", body: { token: "B".repeat(43) }, field: "password" },
  },
  {
    route: "POST /api/account/sign-in-link",
    path: () => "/api/account/sign-in-link",
    body: () => ({ email: `l-${rand()}@test.example` }),
    expect: PUBLIC(202),
    bad: { as: "anon", body: {}, field: "email" },
  },
  { route: "GET /api/account", path: () => "/api/account", expect: EVERYONE(200) },
  { route: "POST /api/account/export", path: () => "/api/account/export", body: () => ({}), expect: EVERYONE(200) },
  {
    route: "GET /api/account/export",
    path: () => "/api/account/export?ticket=0000000000.not-a-signature",
    expect: EVERYONE(400),
  },
  // a zip body only (tests/integration/api/account-export.test.ts sends real ones)
  { route: "POST /api/account/import", path: () => "/api/account/import", body: () => ({}), expect: EVERYONE(415) },
  {
    route: "PATCH /api/account",
    path: () => "/api/account",
    body: () => ({ displayUnit: "mm" }),
    expect: EVERYONE(200),
    bad: { body: { displayUnit: "furlong" }, field: "displayUnit" },
  },
  // the deletion needs a body with the password (the table sends none: 415), so no caller is deleted here
  {
    route: "DELETE /api/account",
    path: () => "/api/account",
    expect: EVERYONE(415),
    bad: { body: { password: 42 }, field: "password" },
  },
  { route: "GET /api/account/deletion", path: () => "/api/account/deletion", expect: EVERYONE(200) },
  // every caller here has a password: the link is only for accounts without one
  { route: "POST /api/account/deletion/link", path: () => "/api/account/deletion/link", expect: EVERYONE(409) },

  { route: "GET /api/engines", path: () => "/api/engines", expect: EVERYONE(200) },
  {
    route: "POST /api/engines",
    path: () => "/api/engines",
    body: () => ENGINE_FOUR,
    expect: EVERYONE(201),
    bad: { body: { ...ENGINE_FOUR, cylinders: 17 }, field: "cylinders" },
  },
  {
    route: "GET /api/engines/:engineId",
    path: (i) => `/api/engines/${i.engineId}`,
    expect: { ...OWNER_ONLY, owner: 200 },
  },
  {
    route: "PATCH /api/engines/:engineId",
    path: (i) => `/api/engines/${i.engineId}`,
    body: () => ({ name: "Renamed four" }),
    expect: { ...OWNER_ONLY, owner: 200 },
    bad: { body: { intake: { min: 0.3, max: 0.2 } }, field: "intake.max" },
  },
  {
    route: "DELETE /api/engines/:engineId",
    path: (i) => `/api/engines/${i.engineId}`,
    fresh: freshEngine,
    expect: { ...OWNER_ONLY, owner: 204 },
  },
  {
    route: "GET /api/engines/:engineId/checks",
    path: (i) => `/api/engines/${i.engineId}/checks`,
    expect: { ...OWNER_ONLY, owner: 200 },
  },
  {
    route: "POST /api/engines/:engineId/checks",
    path: (i) => `/api/engines/${i.engineId}/checks`,
    body: () => ({ odometer: 100 }),
    expect: { ...OWNER_ONLY, owner: 201 },
    bad: { body: { odometer: -5 }, field: "odometer" },
  },

  { route: "GET /api/checks/:checkId", path: (i) => `/api/checks/${i.checkId}`, expect: CHECK_READ },
  {
    route: "PATCH /api/checks/:checkId",
    path: (i) => `/api/checks/${i.checkId}`,
    body: () => ({ notes: "cold, 14 °C" }),
    expect: CHECK_WRITE(200),
    bad: { body: { status: "exploded" }, field: "status" },
  },
  {
    route: "DELETE /api/checks/:checkId",
    path: (i) => `/api/checks/${i.checkId}`,
    fresh: () => freshCheck(),
    expect: CHECK_WRITE(204),
  },
  { route: "GET /api/checks/:checkId/readings", path: (i) => `/api/checks/${i.checkId}/readings`, expect: CHECK_READ },
  {
    route: "PUT /api/checks/:checkId/readings",
    path: (i) => `/api/checks/${i.checkId}/readings`,
    body: () => ({ readings: [{ valve: "I1.1", installedStamp: 2.6, feelerGo: 0.15, feelerNoGo: 0.18 }] }),
    expect: CHECK_WRITE(200),
    bad: { body: { readings: [{ valve: "I1.1", feelerGo: 0.2, feelerNoGo: 0.15 }] }, field: "readings.0.feelerNoGo" },
  },
  { route: "GET /api/checks/:checkId/shares", path: (i) => `/api/checks/${i.checkId}/shares`, expect: CHECK_READ },
  {
    route: "POST /api/checks/:checkId/shares",
    path: (i) => `/api/checks/${i.checkId}/shares`,
    body: (i) => ({ clubId: i.clubId }),
    expect: CHECK_WRITE(201),
    bad: { body: { clubId: "club-1" }, field: "clubId" },
  },
  { route: "GET /api/checks/:checkId/comments", path: (i) => `/api/checks/${i.checkId}/comments`, expect: CHECK_READ },
  {
    route: "POST /api/checks/:checkId/comments",
    path: (i) => `/api/checks/${i.checkId}/comments`,
    body: () => ({ body: "Looks fine", valve: "E2.1" }),
    expect: { owner: 201, mentor: 201, others: 404, anon: 401 },
    bad: { body: { body: "" }, field: "body" },
  },
  { route: "GET /api/checks/:checkId/photos", path: (i) => `/api/checks/${i.checkId}/photos`, expect: CHECK_READ },
  {
    route: "POST /api/checks/:checkId/photos",
    path: (i) => `/api/checks/${i.checkId}/photos`,
    form: async () => photoForm(photo),
    expect: { owner: 201, mentor: 201, others: 404, anon: 401 },
  },
  { route: "GET /api/photos/:photoId", path: (i) => `/api/photos/${i.photoId}`, expect: CHECK_READ },
  { route: "GET /api/photos/usage", path: () => "/api/photos/usage", expect: EVERYONE(200) },
  {
    route: "DELETE /api/photos/:photoId",
    path: (i) => `/api/photos/${i.photoId}`,
    fresh: freshPhoto,
    expect: CHECK_WRITE(204),
  },
  {
    route: "DELETE /api/shares/:shareId",
    path: (i) => `/api/shares/${i.shareId}`,
    fresh: () => freshCheck(),
    expect: CHECK_WRITE(204),
  },
  {
    route: "PUT /api/shares/:shareId/verdict",
    path: (i) => `/api/shares/${i.shareId}/verdict`,
    body: () => ({ verdict: "measure-again" }),
    expect: { owner: 403, mentor: 200, others: 404, anon: 401 },
    bad: { as: "mentor", body: { verdict: "ok" }, field: "verdict" },
  },

  { route: "GET /api/tray", path: () => "/api/tray", expect: EVERYONE(200) },
  {
    route: "POST /api/tray",
    path: () => "/api/tray",
    body: () => ({ size: 2.55, count: 1 }),
    expect: EVERYONE(201),
    bad: { body: { size: 2.55, count: -1 }, field: "count" },
  },
  {
    route: "PATCH /api/tray/:itemId",
    path: (i) => `/api/tray/${i.trayId}`,
    body: () => ({ count: 3 }),
    expect: { ...OWNER_ONLY, owner: 200 },
    bad: { body: { count: 1.5 }, field: "count" },
  },
  {
    route: "DELETE /api/tray/:itemId",
    path: (i) => `/api/tray/${i.trayId}`,
    fresh: freshTray,
    expect: { ...OWNER_ONLY, owner: 204 },
  },

  { route: "GET /api/clubs", path: () => "/api/clubs", expect: EVERYONE(200) },
  {
    route: "POST /api/clubs",
    path: () => "/api/clubs",
    body: () => ({ name: `Club ${rand()}` }),
    expect: EVERYONE(201),
    bad: { body: { name: "" }, field: "name" },
  },
  {
    route: "GET /api/clubs/:clubId",
    path: (i) => `/api/clubs/${i.clubId}`,
    expect: { owner: 200, mentor: 200, admin: 200, others: 404, anon: 401 },
  },
  {
    route: "GET /api/clubs/:clubId/members",
    path: (i) => `/api/clubs/${i.clubId}/members`,
    expect: { owner: 200, mentor: 200, admin: 200, others: 404, anon: 401 },
  },
  {
    route: "PUT /api/clubs/:clubId/members/:userId",
    path: (i) => `/api/clubs/${i.clubId}/members/${i.memberId}`,
    body: () => ({ roles: ["mechanic", "mentor"] }),
    fresh: freshMember,
    expect: { admin: 200, owner: 403, mentor: 403, others: 404, anon: 401 },
    bad: { as: "admin", body: { roles: ["owner"] }, field: "roles.0" },
  },
  {
    route: "DELETE /api/clubs/:clubId/members/:userId",
    path: (i) => `/api/clubs/${i.clubId}/members/${i.memberId}`,
    fresh: freshMember,
    expect: { admin: 204, owner: 403, mentor: 403, others: 404, anon: 401 },
  },
  {
    route: "GET /api/clubs/:clubId/invites",
    path: (i) => `/api/clubs/${i.clubId}/invites`,
    expect: { admin: 200, owner: 403, mentor: 403, others: 404, anon: 401 },
  },
  {
    route: "POST /api/clubs/:clubId/invites",
    path: (i) => `/api/clubs/${i.clubId}/invites`,
    body: () => ({ email: `inv-${rand()}@test.example`, role: "mentor" }),
    expect: { admin: 201, owner: 403, mentor: 403, others: 404, anon: 401 },
    bad: { as: "admin", body: { email: "nope" }, field: "email" },
  },
  {
    route: "DELETE /api/clubs/:clubId/invites/:inviteId",
    path: (i) => `/api/clubs/${i.clubId}/invites/${i.inviteId}`,
    fresh: freshInvite,
    expect: { admin: 204, owner: 403, mentor: 403, others: 404, anon: 401 },
  },
  {
    route: "GET /api/clubs/:clubId/log",
    path: (i) => `/api/clubs/${i.clubId}/log`,
    expect: { admin: 200, owner: 403, mentor: 403, others: 404, anon: 401 },
  },
  {
    route: "GET /api/clubs/:clubId/queue",
    path: (i) => `/api/clubs/${i.clubId}/queue`,
    expect: { mentor: 200, owner: 403, admin: 403, others: 404, anon: 401 },
  },
  {
    route: "GET /api/clubs/:clubId/pool",
    path: (i) => `/api/clubs/${i.clubId}/pool`,
    expect: { owner: 200, mentor: 200, admin: 200, others: 404, anon: 401 },
  },
  {
    route: "POST /api/clubs/:clubId/pool",
    path: (i) => `/api/clubs/${i.clubId}/pool`,
    body: () => ({ size: 2.6, count: 1 }),
    expect: { owner: 201, mentor: 409, admin: 409, others: 404, anon: 401 },
    bad: { body: { size: -2.6, count: 1 }, field: "size" },
  },
  {
    route: "DELETE /api/pool/:offerId",
    path: (i) => `/api/pool/${i.offerId}`,
    fresh: freshOffer,
    expect: { owner: 204, others: 404, anon: 401 },
  },
  { route: "GET /api/borrows", path: () => "/api/borrows", expect: EVERYONE(200) },
  {
    route: "POST /api/borrows",
    path: () => "/api/borrows",
    body: (i) => ({ offerId: i.offerId, count: 1 }),
    fresh: freshOffer,
    expect: { mentor: 201, admin: 201, owner: 409, others: 404, anon: 401 },
    bad: { as: "mentor", body: { offerId: "x", count: 1 }, field: "offerId" },
  },
  {
    route: "PUT /api/borrows/:borrowId",
    path: (i) => `/api/borrows/${i.borrowId}`,
    body: () => ({ move: "agree" }),
    fresh: freshLoan,
    expect: { owner: 200, mentor: 409, others: 404, anon: 401 },
    bad: { body: { move: "steal" }, field: "move" },
  },
  {
    route: "POST /api/sync/push",
    path: () => "/api/sync/push",
    body: () => ({ clientId: crypto.randomUUID(), mutations: [] }),
    expect: EVERYONE(200),
    bad: { body: { clientId: "x", mutations: [] }, field: "clientId" },
  },
  {
    route: "POST /api/sync/pull",
    path: () => "/api/sync/pull",
    body: () => ({ cursor: null }),
    expect: EVERYONE(200),
    bad: { body: { cursor: -1 }, field: "cursor" },
  },
  // one-click unsubscribe: no sign-in, a signed token in the address; a token we did not make is 400 for everyone
  {
    route: "GET /api/notices/unsubscribe",
    path: () => `/api/notices/unsubscribe?token=${"A".repeat(20)}.${"B".repeat(43)}`,
    expect: PUBLIC(303),
  },
  {
    route: "POST /api/notices/unsubscribe",
    path: () => `/api/notices/unsubscribe?token=${"A".repeat(20)}.${"B".repeat(43)}`,
    expect: PUBLIC(400),
  },
  // for the load balancer: no sign-in, the same answer for everyone (tests/integration/api/operations.test.ts)
  { route: "GET /api/health/live", path: () => "/api/health/live", expect: PUBLIC(200) },
  { route: "GET /api/health/ready", path: () => "/api/health/ready", expect: PUBLIC(200) },
  // the API's description (tests/integration/api/openapi.test.ts): the same for everyone
  { route: "GET /api/openapi.json", path: () => "/api/openapi.json", expect: PUBLIC(200) },
  {
    route: "POST /api/invites/accept",
    path: () => "/api/invites/accept",
    body: () => ({ token: "C".repeat(43) }),
    expect: EVERYONE(400),
    bad: { body: { token: 5 }, field: "token" },
  },
];

/** next-auth's own handler is tested through the sign-in flows, not through this table. */
const NOT_IN_TABLE = new Set(["GET /api/auth/:nextauth", "POST /api/auth/:nextauth"]);

describe("authorisation matrix", () => {
  it("covers every route that exists", () => {
    const inTable = new Set(TABLE.map((r) => r.route));
    const missing = routesOnDisk().filter((r) => !inTable.has(r) && !NOT_IN_TABLE.has(r));
    expect(missing).toEqual([]);
    expect(TABLE.length).toBeGreaterThan(30);
  });

  for (const row of TABLE) {
    it(`${row.route}: ${ACTORS.map((a) => `${a} ${row.expect[a] ?? row.expect.others}`).join(", ")}`, async () => {
      const [method] = row.route.split(" ");
      const got: Record<string, number> = {};
      const want: Record<string, number> = {};
      for (const actor of ACTORS) {
        const cellIds = { ...ids, ...(row.fresh ? await row.fresh() : {}) };
        const body = row.body?.(cellIds);
        const res = row.form
          ? await clients[actor].form(method!, row.path(cellIds), await row.form(cellIds))
          : await clients[actor].call(
              method!,
              row.path(cellIds),
              method === "GET" || method === "DELETE" ? undefined : body,
            );
        got[actor] = res.status;
        want[actor] = row.expect[actor] ?? row.expect.others;
        if (res.status >= 400)
          expect(res.json?.error, `${actor}: error shape`).toMatchObject({
            code: expect.any(String),
            message: expect.any(String),
          });
        expect(JSON.stringify(res.json ?? "")).not.toMatch(/password_?hash|\$2[aby]\$\d\d\$|token_?hash/i);
      }
      expect(got).toEqual(want);
      if (row.bad) {
        const res = await clients[row.bad.as ?? "owner"].call(method!, row.path(ids), row.bad.body);
        expect(res.status).toBe(422);
        expect(res.json.error.fields).toHaveProperty([row.bad.field]);
      }
    });
  }

  it("lists return only the caller's own records", async () => {
    const stranger = await clients.stranger.get("/api/engines");
    expect(stranger.json.items.map((e: { id: string }) => e.id)).not.toContain(ids.engineId);
    const tray = await clients.stranger.get("/api/tray");
    expect(tray.json.items.map((t: { id: string }) => t.id)).not.toContain(ids.trayId);
  });
});
