import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type mysql from "mysql2/promise";
import { Client, signedInClient } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { linkToken, waitForMail } from "../../support/mail";
import { cameraJpeg, photoForm, storedKeys } from "../../support/photos";
import { closedPort, startApp, type App } from "../../support/server";
import { makeUsers } from "../../support/users";

/**
 * Deleting an account: an account that has everything is deleted, and then every column of every
 * table that can hold its id (or its address) is scanned, and the photo store listed: nothing of it
 * remains but the comments it wrote on other members' checks, which stay without their author.
 * Check values are "common practice" figures for a four-cylinder bucket-and-shim head.
 */
let app: App;
let photo: Buffer;
beforeAll(async () => {
  app = await startApp({ OBJECT_DELETE_RETRY_SECONDS: "1" });
  photo = await cameraJpeg(320, 240);
});
afterAll(() => app?.stop());

type U = { id: string; email: string; password: string };
const uuid = () => crypto.randomUUID();

async function withDb<T>(fn: (db: mysql.Connection) => Promise<T>): Promise<T> {
  const db = await rawConnection();
  try {
    return await fn(db);
  } finally {
    await db.end();
  }
}

async function rows<T>(sql: string, args: unknown[] = []): Promise<T[]> {
  return withDb(async (db) => (await db.query(sql, args))[0] as T[]);
}

/**
 * Every (table, column) whose type can hold a uuid or an address, and how many rows of it contain
 * `needle`: the whole schema as the database describes it, so a table added later is scanned too.
 */
async function scan(needle: string): Promise<{ table: string; column: string; n: number }[]> {
  return withDb(async (db) => {
    const [cols] = (await db.query(
      "SELECT table_name AS t, column_name AS c FROM information_schema.columns WHERE table_schema = DATABASE() AND data_type IN ('char','varchar','text','tinytext','mediumtext','longtext','json','blob','longblob','binary','varbinary') AND (character_maximum_length IS NULL OR character_maximum_length >= ?)",
      [Math.min(needle.length, 36)],
    )) as unknown as [{ t: string; c: string }[]];
    expect(cols.length).toBeGreaterThan(30);
    const hits: { table: string; column: string; n: number }[] = [];
    for (const { t, c } of cols) {
      const [[r]] = (await db.query(`SELECT COUNT(*) AS n FROM \`${t}\` WHERE LOCATE(?, \`${c}\`) > 0`, [
        needle,
      ])) as unknown as [{ n: number }[]];
      if (Number(r!.n) > 0) hits.push({ table: t, column: c, n: Number(r!.n) });
    }
    return hits;
  });
}

const reading = (valve: string, go: number, noGo: number) => ({
  valve,
  installedStamp: 2.6,
  feelerGo: go,
  feelerNoGo: noGo,
});

async function engineAndCheck(c: Client) {
  const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await c.post(`/api/engines/${engineId}/checks`, { odometer: 24_000 })).json.check.id as string;
  expect(
    (
      await c.put(`/api/checks/${checkId}/readings`, {
        readings: [reading("I1.1", 0.15, 0.18), reading("E1.1", 0.25, 0.28)],
      })
    ).status,
  ).toBe(200);
  return { engineId, checkId };
}

async function upload(c: Client, checkId: string, fields: { commentId?: string } = {}) {
  const res = await c.form("POST", `/api/checks/${checkId}/photos`, photoForm(photo, fields));
  expect(res.status, JSON.stringify(res.json)).toBe(201);
  return res.json.photo.id as string;
}

async function loan(
  lender: Client,
  borrower: Client,
  clubId: string,
  size: number,
  to: "settled" | "handed-over" | "asked",
) {
  await lender.post("/api/tray", { size, count: 2 });
  const offerId = (await lender.post(`/api/clubs/${clubId}/pool`, { size, count: 2 })).json.offer.id as string;
  const borrowId = (await borrower.post("/api/borrows", { offerId, count: 1 })).json.borrow.id as string;
  if (to === "asked") return borrowId;
  for (const [c, move] of [
    [lender, "agree"],
    [lender, "hand-over"],
    ...(to === "settled"
      ? [
          [borrower, "give-back"],
          [lender, "settle"],
        ]
      : []),
  ] as [Client, string][])
    expect((await c.put(`/api/borrows/${borrowId}`, { move })).status, move).toBe(200);
  return borrowId;
}

const snapshot = (u: U) =>
  rows<{ n: number }>(
    `SELECT (SELECT COUNT(*) FROM users WHERE id = ?) + (SELECT COUNT(*) FROM engines WHERE owner_id = ?) + (SELECT COUNT(*) FROM checks WHERE owner_id = ?)
      + (SELECT COUNT(*) FROM readings WHERE owner_id = ?) + (SELECT COUNT(*) FROM memberships WHERE user_id = ?) + (SELECT COUNT(*) FROM uploads WHERE owner_id = ?)
      + (SELECT COUNT(*) FROM tray_items WHERE owner_id = ?) AS n`,
    Array(7).fill(u.id),
  ).then((r) => Number(r[0]!.n));

/** An account without a password, signed in through a mailed link. */
async function linkSignedIn(u: U) {
  await withDb((db) => db.query("UPDATE users SET password_hash = NULL WHERE id = ?", [u.id]));
  const c = new Client(app.url);
  await c.post("/api/account/sign-in-link", { email: u.email });
  expect(
    await c.signIn("email-link", { token: linkToken(await waitForMail(u.email, /sign-in link/i), "/sign-in/link") }),
  ).toBeNull();
  return c;
}

function deleteToken(mail: { text: string }): string {
  const m = /\/account\?delete=([A-Za-z0-9_%-]+)/.exec(mail.text);
  if (!m) throw new Error(`no deletion link in: ${mail.text}`);
  return decodeURIComponent(m[1]!);
}

describe("deleting an account", () => {
  it("leaves nothing of the account in any table or in the photo store, but its comments on others' checks, without the author", async () => {
    const [me, mentor, coAdmin, other] = await makeUsers("del-me", "del-mentor", "del-coadmin", "del-other");
    const c = await signedInClient(app.url, me);
    const phone = await signedInClient(app.url, me); // a second session: another phone
    const m = await signedInClient(app.url, mentor);
    const a = await signedInClient(app.url, coAdmin);
    const o = await signedInClient(app.url, other);

    // club roles: admin (with a co-admin) of a club it made; mentor in another; alone in a third
    const mine = (await c.post("/api/clubs", { name: "Deleted Member's Club" })).json.club.id as string;
    await addMembership(mine, coAdmin.id, ["admin", "mechanic"]);
    await addMembership(mine, mentor.id, ["mentor", "mechanic"]);
    await addMembership(mine, other.id, ["mechanic"]);
    const theirs = (await a.post("/api/clubs", { name: "Co-admin's Club" })).json.club.id as string;
    await addMembership(theirs, me.id, ["mentor", "mechanic"]);
    await addMembership(theirs, other.id, ["mechanic"]);
    const solo = (await c.post("/api/clubs", { name: "Club of One" })).json.club.id as string;
    expect(
      (
        await c.post(`/api/clubs/${mine}/invites`, {
          email: `del-invitee-${uuid().slice(0, 8)}@test.example`,
          role: "mechanic",
        })
      ).status,
    ).toBe(201);
    // an invitation to its own address, still pending: the club's record names the address
    const invited = await a.post(`/api/clubs/${theirs}/invites`, { email: me.email, role: "mechanic" });
    expect(invited.status).toBe(201);

    // its garage: engines, checks, readings (with an overwritten one: history), tray, photos
    const own = await engineAndCheck(c);
    expect(
      (await c.put(`/api/checks/${own.checkId}/readings`, { readings: [reading("I1.1", 0.13, 0.15)] })).status,
    ).toBe(200);
    await engineAndCheck(c);
    const trayId = (await c.post("/api/tray", { size: 2.55, count: 3 })).json.item.id as string;
    expect((await c.del(`/api/tray/${trayId}`)).status).toBe(204); // a tombstone
    await c.post("/api/tray", { size: 2.65, count: 1 });
    // shared with its club: the mentor comments, gives a verdict and adds a photo; it answers
    const shareId = (await c.post(`/api/checks/${own.checkId}/shares`, { clubId: mine })).json.share.id as string;
    expect(
      (await m.post(`/api/checks/${own.checkId}/comments`, { body: "Exhaust 1 is tight: re-measure it warm?" })).status,
    ).toBe(201);
    expect((await m.put(`/api/shares/${shareId}/verdict`, { verdict: "stop-and-ask" })).status).toBe(200);
    await upload(m, own.checkId);
    expect(
      (await c.post(`/api/checks/${own.checkId}/comments`, { body: "Measured cold, as the book says." })).status,
    ).toBe(201);
    await upload(c, own.checkId);
    // a mentor on another member's check: a comment with a photo on it, and a verdict
    const theirCheck = await engineAndCheck(o);
    const theirShare = (await o.post(`/api/checks/${theirCheck.checkId}/shares`, { clubId: theirs })).json.share
      .id as string;
    const kept = (
      await c.post(`/api/checks/${theirCheck.checkId}/comments`, {
        body: "Intake 1 is fine; the exhaust wants a thinner shim.",
      })
    ).json.comment.id as string;
    await upload(c, theirCheck.checkId, { commentId: kept });
    expect((await c.put(`/api/shares/${theirShare}/verdict`, { verdict: "stop-and-ask" })).status).toBe(200);
    // loans, all settled (or not yet started: those end with the membership)
    await loan(c, o, mine, 2.6, "settled");
    await loan(o, c, mine, 2.7, "settled");
    await loan(c, m, mine, 2.8, "asked");
    // a phone that synced (its device row, a refused mutation), mail waiting, links asked for, budgets spent
    expect(
      (
        await phone.post("/api/sync/push", {
          clientId: uuid(),
          mutations: [
            { id: 1, name: "tray.delete/1", args: { id: uuid() } },
            { id: 2, name: "check.put/1", args: { id: uuid(), engineId: uuid(), odometer: 1 } },
          ],
        })
      ).status,
    ).toBe(200);
    expect((await phone.post("/api/sync/pull", { cursor: null })).status).toBe(200);
    await new Client(app.url).post("/api/account/sign-in-link", { email: me.email });
    await waitForMail(me.email, /sign-in link/i);
    await new Client(app.url).post("/api/account/password-reset", { email: me.email });
    expect(
      await new Client(app.url).signIn("password", { email: me.email, password: "not-the-password" }),
    ).not.toBeNull();

    const keys = (
      await rows<{ k: string }>(
        "SELECT u.object_key AS k FROM uploads u JOIN checks c ON c.id = u.check_id WHERE u.owner_id = ? OR c.owner_id = ?",
        [me.id, me.id],
      )
    ).map((r) => r.k);
    expect(keys).toHaveLength(3);
    const inStore = await storedKeys("checks/");
    for (const k of keys) expect(inStore).toContain(k);
    const before = await scan(me.id);
    // the fixture reaches every kind of row that can name the account
    for (const t of [
      "users",
      "engines",
      "checks",
      "readings",
      "tray_items",
      "tombstones",
      "uploads",
      "comments",
      "shares",
      "memberships",
      "clubs",
      "club_log",
      "invites",
      "pool_offers",
      "borrow_requests",
      "sync_clients",
      "auth_tokens",
      "notices",
      "owner_versions",
      "rate_limits",
    ])
      expect(
        before.map((h) => h.table),
        t,
      ).toContain(t);

    // what it will do, said first
    const preview = (await c.get("/api/account/deletion")).json.preview;
    expect(preview).toMatchObject({
      email: me.email,
      hasPassword: true,
      engines: 2,
      checks: 2,
      readings: 4,
      photos: 3,
      trayItems: 4,
      shares: 1,
      commentsKept: 1,
      blockers: [],
    });
    expect(preview.clubs.map((x: { name: string }) => x.name).sort()).toEqual([
      "Co-admin's Club",
      "Deleted Member's Club",
    ]);
    expect(preview.soloClubs).toEqual([{ id: solo, name: "Club of One" }]);

    const res = await c.call("DELETE", "/api/account", { password: me.password });
    expect(res.status, JSON.stringify(res.json)).toBe(200);
    expect(res.json).toMatchObject({ deleted: true, photos: 3, commentsKept: 1 });

    // every session ends: the other phone is told its session was revoked, and wipes its copy
    for (const [path, body] of [
      ["/api/account", undefined],
      ["/api/sync/pull", { cursor: null }],
    ] as const) {
      const r = await phone.call(path === "/api/account" ? "GET" : "POST", path, body);
      expect(r.status, path).toBe(401);
      expect(r.json.error.code, path).toBe("session_revoked");
    }
    expect((await phone.get("/api/auth/session")).json).toEqual({ revoked: true });

    // no table holds the id or the address any more
    expect(await scan(me.id)).toEqual([]);
    expect(await scan(me.email)).toEqual([]);
    // the comment on another member's check stays, without its author
    const [comment] = await rows<{ author_id: string | null; body: string }>(
      "SELECT author_id, body FROM comments WHERE id = ?",
      [kept],
    );
    expect(comment).toEqual({ author_id: null, body: "Intake 1 is fine; the exhaust wants a thinner shim." });
    const thread = (await o.get(`/api/checks/${theirCheck.checkId}/comments`)).json.items;
    expect(thread).toEqual([expect.objectContaining({ id: kept, authorId: null, authorName: "a former member" })]);
    // and the owner's phone pulls it again without the id
    const pulled = (await o.post("/api/sync/pull", { cursor: null })).json.comments as {
      id: string;
      authorId: string | null;
    }[];
    expect(pulled.find((x) => x.id === kept)?.authorId).toBeNull();
    // the clubs it shared go on without it; the club of one went with it
    expect((await a.get(`/api/clubs/${mine}`)).status).toBe(200);
    expect(await rows("SELECT id FROM clubs WHERE id = ?", [solo])).toEqual([]);
    expect(
      (
        await rows<{ n: number }>("SELECT COUNT(*) AS n FROM memberships WHERE club_id = ? AND role = 'admin'", [mine])
      )[0]!.n,
    ).toBe(1);

    // mail stops at once: nothing is left queued for the address
    expect(await rows("SELECT id FROM notices WHERE to_email = ?", [me.email])).toEqual([]);

    // the photos leave the store (the sweep after the commit; retried until done)
    await expect
      .poll(async () => (await storedKeys("checks/")).filter((k) => keys.includes(k)), { timeout: 20_000 })
      .toEqual([]);
    await expect
      .poll(async () => rows("SELECT object_key FROM object_deletions WHERE object_key IN (?)", [keys]), {
        timeout: 10_000,
      })
      .toEqual([]);
    // the password opens nothing now (this try is counted on the address, as any try at an unknown one)
    expect(await new Client(app.url).signIn("password", { email: me.email, password: me.password })).not.toBeNull();
    // other members' photos elsewhere are untouched
    const theirPhoto = await upload(o, theirCheck.checkId);
    expect(theirPhoto).toBeTruthy();
  });

  it("a wrong password changes nothing, and five of them spend the account's tries", async () => {
    const me = await makeUser("del-wrong");
    const c = await signedInClient(app.url, me);
    await engineAndCheck(c);
    const before = await snapshot(me);
    const wrong = await c.call("DELETE", "/api/account", { password: "feeler-blade-0.26" });
    expect(wrong.status).toBe(422);
    expect(wrong.json.error.fields).toHaveProperty("password");
    expect(await snapshot(me)).toBe(before);
    expect((await c.get("/api/account")).status).toBe(200);
    // neither both proofs nor none
    expect((await c.call("DELETE", "/api/account", {})).status).toBe(422);
    expect((await c.call("DELETE", "/api/account", { password: me.password, token: "A".repeat(43) })).status).toBe(422);
    for (let i = 0; i < 4; i++)
      expect((await c.call("DELETE", "/api/account", { password: `wrong-${i}` })).status).toBe(422);
    const spent = await c.raw("DELETE", "/api/account", {
      body: JSON.stringify({ password: me.password }),
      headers: { "content-type": "application/json" },
    });
    expect(spent.status).toBe(429);
    expect(Number(spent.headers.get("retry-after"))).toBeGreaterThan(0);
    expect(await snapshot(me)).toBe(before);
  });

  it("the last admin of a club with other members is refused, naming the club, and nothing changes", async () => {
    const [me, member] = await Promise.all([makeUser("del-lastadmin"), makeUser("del-member")]);
    const c = await signedInClient(app.url, me);
    const clubId = (await c.post("/api/clubs", { name: "Only One Admin Club" })).json.club.id as string;
    await addMembership(clubId, member.id, ["mechanic"]);
    await engineAndCheck(c);
    const before = await snapshot(me);
    const preview = (await c.get("/api/account/deletion")).json.preview;
    expect(preview.blockers).toEqual([
      expect.objectContaining({ kind: "last-admin", clubName: "Only One Admin Club" }),
    ]);
    const res = await c.call("DELETE", "/api/account", { password: me.password });
    expect(res.status).toBe(409);
    expect(res.json.error.code).toBe("deletion_blocked");
    expect(res.json.error.message).toContain("Only One Admin Club");
    expect(await snapshot(me)).toBe(before);
    // once another member is admin, it goes through
    await addMembership(clubId, member.id, ["admin"]);
    expect((await c.call("DELETE", "/api/account", { password: me.password })).status).toBe(200);
    expect(await scan(me.id)).toEqual([]);
  });

  it("an open loan is refused, naming the other side, on either side of it", async () => {
    const [lender, borrower, admin] = await makeUsers("del-lender", "del-borrower", "del-loanadmin");
    const [l, b, a] = await Promise.all([
      signedInClient(app.url, lender),
      signedInClient(app.url, borrower),
      signedInClient(app.url, admin),
    ]);
    const clubId = (await a.post("/api/clubs", { name: "Loan Club" })).json.club.id as string;
    await addMembership(clubId, lender.id, ["mechanic"]);
    await addMembership(clubId, borrower.id, ["mechanic"]);
    await loan(l, b, clubId, 2.6, "handed-over");
    for (const [c, u, otherName] of [
      [l, lender, "Test del-borrower"],
      [b, borrower, "Test del-lender"],
    ] as [Client, U, string][]) {
      const before = await snapshot(u);
      const res = await c.call("DELETE", "/api/account", { password: u.password });
      expect(res.status).toBe(409);
      expect(res.json.error.message).toContain(otherName);
      expect(await snapshot(u)).toBe(before);
    }
  });

  it("an account without a password deletes itself through a link mailed to its address", async () => {
    const me = await makeUser("del-nopass");
    const c = await linkSignedIn(me);
    await engineAndCheck(c);
    expect((await c.get("/api/account/deletion")).json.preview.hasPassword).toBe(false);
    // a password is no proof here, and a made-up link neither
    expect((await c.call("DELETE", "/api/account", { password: "anything-at-all" })).status).toBe(422);
    expect((await c.call("DELETE", "/api/account", { token: "Z".repeat(43) })).status).toBe(400);
    expect((await c.post("/api/account/deletion/link")).status).toBe(202);
    const token = deleteToken(await waitForMail(me.email, /Confirm deleting/));
    // another account without a password cannot use it
    const stranger = await linkSignedIn(await makeUser("del-stranger"));
    expect((await stranger.call("DELETE", "/api/account", { token })).status).toBe(400);
    expect((await c.call("DELETE", "/api/account", { token })).status).toBe(200);
    expect(await scan(me.id)).toEqual([]);
    expect(await scan(me.email)).toEqual([]);
  });
});

describe("the photo sweep when the store is down", () => {
  it("keeps the keys through the failure and removes the photos once the store answers", async () => {
    const me = await makeUser("del-storedown");
    const c = await signedInClient(app.url, me);
    const { checkId } = await engineAndCheck(c);
    await upload(c, checkId);
    await upload(c, checkId);
    const keys = (await rows<{ k: string }>("SELECT object_key AS k FROM uploads WHERE owner_id = ?", [me.id])).map(
      (r) => r.k,
    );
    // the healthy instance stops, so only the broken one can sweep
    await app.stop();
    const broken = await startApp({
      S3_ENDPOINT: `http://127.0.0.1:${await closedPort()}`,
      OBJECT_DELETE_RETRY_SECONDS: "1",
    });
    try {
      const b = await signedInClient(broken.url, me);
      expect((await b.call("DELETE", "/api/account", { password: me.password })).status).toBe(200);
      expect(await scan(me.id)).toEqual([]);
      await expect
        .poll(
          async () =>
            Number(
              (
                await rows<{ a: number }>("SELECT MIN(attempts) AS a FROM object_deletions WHERE object_key IN (?)", [
                  keys,
                ])
              )[0]?.a ?? 0,
            ),
          { timeout: 20_000 },
        )
        .toBeGreaterThan(0);
      const waiting = await rows<{ k: string; e: string }>(
        "SELECT object_key AS k, last_error AS e FROM object_deletions WHERE object_key IN (?)",
        [keys],
      );
      expect(waiting.map((w) => w.k).sort()).toEqual([...keys].sort());
      expect(waiting.every((w) => !!w.e)).toBe(true);
      const inStore = await storedKeys("checks/");
      for (const k of keys) expect(inStore).toContain(k);
    } finally {
      await broken.stop();
    }
    await app.restart();
    await expect
      .poll(async () => (await storedKeys("checks/")).filter((k) => keys.includes(k)), { timeout: 30_000 })
      .toEqual([]);
    // the sweep forgets a key just after the store confirmed its object: wait for that too
    await expect
      .poll(async () => await rows("SELECT object_key FROM object_deletions WHERE object_key IN (?)", [keys]), {
        timeout: 10_000,
      })
      .toEqual([]);
  });
});
