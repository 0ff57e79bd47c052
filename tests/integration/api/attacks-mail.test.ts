import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type mysql from "mysql2/promise";
import { Client, signedInClient } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { header, inbox, waitForMail } from "../../support/mail";
import { startApp, type App } from "../../support/server";

/**
 * Mail relay and mail bombing (issue 24, item 5), played as an attacker would: through the API only,
 * reading what arrives in the mail catcher. Notices are gathered for 6 s here (minutes in
 * production), long enough for ten requests in a row to land in one window.
 */
let app: App;
let db: mysql.Connection;
beforeAll(async () => {
  app = await startApp({ NOTICE_DIGEST_SECONDS: "6", NOTICE_RETRY_SECONDS: "1" });
  db = await rawConnection();
});
afterAll(async () => {
  await db?.end();
  await app?.stop();
});

const signedIn = (u: { email: string; password: string }) => signedInClient(app.url, u);

/** Nothing left to send to an address: every notice to it sent or dropped. */
async function settled(email: string) {
  await expect
    .poll(
      async () => {
        const [rows] = await db.query(
          "SELECT COUNT(*) AS n FROM notices WHERE to_email = ? AND status IN ('queued', 'sending')",
          [email],
        );
        return Number((rows as { n: number }[])[0]!.n);
      },
      { timeout: 40_000, interval: 250 },
    )
    .toBe(0);
}

async function noticeRows(email: string, kind?: string) {
  const [rows] = await db.query(
    `SELECT kind, status FROM notices WHERE to_email = ?${kind ? " AND kind = ?" : ""}`,
    kind ? [email, kind] : [email],
  );
  return rows as { kind: string; status: string }[];
}

async function sharedCheck(tag: string) {
  const [owner, mentor] = await Promise.all([makeUser(`${tag}-owner`), makeUser(`${tag}-mentor`)]);
  const o = await signedIn(owner);
  const clubId = (await o.post("/api/clubs", { name: `${tag} club` })).json.club.id as string;
  await addMembership(clubId, mentor.id, ["mentor"]);
  const m = await signedIn(mentor);
  const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 30_000 })).json.check.id as string;
  const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
  return { owner, mentor, o, m, clubId, checkId, shareId };
}

describe("mail bombing: notices to one person are gathered", () => {
  it("twenty loan asks and withdrawals in one push reach the lender as one mail", async () => {
    const [lender, borrower] = await Promise.all([makeUser("mb-lender"), makeUser("mb-borrower")]);
    const l = await signedIn(lender);
    const clubId = (await l.post("/api/clubs", { name: "Bomb Club" })).json.club.id as string;
    await addMembership(clubId, borrower.id, ["mechanic"]);
    await l.post("/api/tray", { size: 2.45, count: 10 });
    const offerId = (await l.post(`/api/clubs/${clubId}/pool`, { size: 2.45, count: 10 })).json.offer.id as string;
    const b = await signedIn(borrower);
    const mutations = Array.from({ length: 10 }, (_, i) => {
      const id = crypto.randomUUID();
      return [
        { id: 2 * i + 1, name: "borrow.ask/1", args: { id, offerId, count: 1 } },
        { id: 2 * i + 2, name: "borrow.move/1", args: { id, move: "withdraw" } },
      ];
    }).flat();
    expect((await b.post("/api/sync/push", { clientId: crypto.randomUUID(), mutations })).json).toEqual({
      lastMutationId: 20,
      rejected: [],
    });
    const mail = await waitForMail(lender.email, /asks to borrow/, 40_000);
    await settled(lender.email);
    expect(await inbox(lender.email)).toHaveLength(1);
    // the one mail says what happened, counted rather than repeated
    expect(mail.subject).toMatch(/asks to borrow 1 × 2\.45 mm/);
    expect(mail.subject).toMatch(/taken back|withdrawn/);
    expect(mail.text.match(/would like to borrow/g)?.length).toBe(10);
  });

  it("ten comments in one push, and ten sent one by one, each reach the owner as one mail", async () => {
    const pushed = await sharedCheck("mb-push");
    const mutations = Array.from({ length: 10 }, (_, i) => ({
      id: i + 1,
      name: "comment.add/1",
      args: { id: crypto.randomUUID(), checkId: pushed.checkId, body: `pushed remark ${i}` },
    }));
    expect((await pushed.m.post("/api/sync/push", { clientId: crypto.randomUUID(), mutations })).json.rejected).toEqual(
      [],
    );

    const oneByOne = await sharedCheck("mb-rest");
    for (let i = 0; i < 10; i++)
      expect(
        (await oneByOne.m.post(`/api/checks/${oneByOne.checkId}/comments`, { body: `posted remark ${i}` })).status,
      ).toBe(201);

    for (const [who, word] of [
      [pushed.owner.email, "pushed"],
      [oneByOne.owner.email, "posted"],
    ] as const) {
      await waitForMail(who, /New comment from/, 40_000);
      await settled(who);
      const mails = await inbox(who);
      expect(mails).toHaveLength(1);
      for (let i = 0; i < 10; i++) expect(mails[0]!.text).toContain(`${word} remark ${i}`);
    }
  });
});

describe("mail relay: what a user typed never reaches a stranger as a link or a subject", () => {
  const LURE = "Free shims https://evil.example/login";
  const HOST = /evil\.example/i;

  it("a club named as a lure, invited by someone named as one: no link to that host, no word of theirs in the subject", async () => {
    const admin = await makeUser("relay-admin");
    const a = await signedIn(admin);
    expect((await a.patch("/api/account", { name: "Support www.evil.example" })).status).toBe(200);
    const clubId = (await a.post("/api/clubs", { name: LURE })).json.club.id as string;
    const stranger = `relay-victim-${crypto.randomUUID().slice(0, 8)}@test.example`;
    expect((await a.post(`/api/clubs/${clubId}/invites`, { email: stranger, role: "mechanic" })).status).toBe(201);
    const mail = await waitForMail(stranger, /invites you/, 20_000);
    expect(mail.subject).not.toMatch(/shims|evil|Support/i);
    // in neither part is the host written so that a client could make a link of it
    expect(mail.text).not.toMatch(HOST);
    expect(mail.html ?? "").not.toMatch(HOST);
    expect(mail.html ?? "").not.toMatch(/href="[^"]*evil/i);
    // every link in the HTML is the app's own
    for (const [, href] of (mail.html ?? "").matchAll(/href="([^"]*)"/g))
      expect(new URL(href!.replace(/&amp;/g, "&")).origin).toBe(app.url);
    // the names are there, quoted and disarmed
    expect(mail.text).toContain("“Free shims https[:]//evil[.]example/login”");
    expect(mail.text).toContain("“Support www[.]evil[.]example”");
  });

  it("a sign-up for someone else's address mails them nothing the sign-up chose", async () => {
    const victim = `signup-victim-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const c = new Client(app.url);
    expect(
      (await c.post("/api/account/sign-up", { email: victim, name: LURE, password: "a-long-password-1" })).status,
    ).toBe(202);
    const mail = await waitForMail(victim, /Confirm your e-mail/);
    expect(`${mail.subject}\n${mail.text}\n${mail.html}`).not.toMatch(/shims|evil/i);
  });
});

describe("invitation budgets", () => {
  it("beyond the sender's 20 a day: 429 with Retry-After, no invitation stored and no mail queued", async () => {
    const admin = await makeUser("budget-sender");
    const a = await signedIn(admin);
    const clubId = (await a.post("/api/clubs", { name: "Budget Club" })).json.club.id as string;
    const tag = crypto.randomUUID().slice(0, 8);
    for (let i = 0; i < 20; i++)
      expect(
        (await a.post(`/api/clubs/${clubId}/invites`, { email: `bs-${tag}-${i}@test.example`, role: "mechanic" }))
          .status,
      ).toBe(201);
    const over = `bs-${tag}-over@test.example`;
    const res = await a.raw("POST", `/api/clubs/${clubId}/invites`, {
      body: JSON.stringify({ email: over, role: "mechanic" }),
      headers: { "content-type": "application/json" },
    });
    expect(res.status).toBe(429);
    expect(Number(res.headers.get("retry-after"))).toBeGreaterThan(0);
    expect(((await res.json()) as { error: { code: string } }).error.code).toBe("throttled");
    expect(
      (await a.get(`/api/clubs/${clubId}/invites`)).json.items.map((i: { email: string }) => i.email),
    ).not.toContain(over);
    expect(await noticeRows(over)).toEqual([]);
  });

  it("beyond an address's 3 a day, from anyone: 429, and the address gets no more", async () => {
    const target = `bt-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const admins = await Promise.all([1, 2, 3, 4].map((i) => makeUser(`budget-to-${i}`)));
    const statuses: number[] = [];
    for (const admin of admins) {
      const a = await signedIn(admin);
      const clubId = (await a.post("/api/clubs", { name: "Another club" })).json.club.id as string;
      statuses.push((await a.post(`/api/clubs/${clubId}/invites`, { email: target, role: "mechanic" })).status);
    }
    expect(statuses).toEqual([201, 201, 201, 429]);
    expect(await noticeRows(target)).toHaveLength(3);
  });
});

describe("one-click unsubscribe (RFC 8058)", () => {
  it("every notice carries the header pair; the POST stops notices without sign-in; the account page turns them back on; account mail never stops", async () => {
    const s = await sharedCheck("unsub");
    expect((await s.m.put(`/api/shares/${s.shareId}/verdict`, { verdict: "measure-again" })).status).toBe(200);
    const mail = await waitForMail(s.owner.email, /Review verdict/, 20_000);
    const list = await header(mail, "List-Unsubscribe");
    expect(list).toMatch(
      new RegExp(
        `^<${app.url.replace(/\./g, "\\.")}/api/notices/unsubscribe\\?token=[A-Za-z0-9_-]+\\.[A-Za-z0-9_-]{43}>$`,
      ),
    );
    expect(await header(mail, "List-Unsubscribe-Post")).toBe("List-Unsubscribe=One-Click");
    // the text says how to stop them too, through the page that asks before it stops anything
    expect(mail.text).toMatch(/\/unsubscribe\?token=/);
    const url = list!.slice(1, -1);

    // as a mail provider sends it: from its own servers, no cookie, a form body; a forged token does nothing
    const oneClick = (u: string) =>
      fetch(u, {
        method: "POST",
        headers: { "content-type": "application/x-www-form-urlencoded", "sec-fetch-site": "cross-site" },
        body: "List-Unsubscribe=One-Click",
      });
    const forged = url.slice(0, -1) + (url.endsWith("A") ? "B" : "A");
    expect((await oneClick(forged)).status).toBe(400);
    expect((await s.o.get("/api/account")).json.user.noticesByEmail).toBe(true);
    expect((await oneClick(url)).status).toBe(200);
    expect((await s.o.get("/api/account")).json.user.noticesByEmail).toBe(false);

    // a new comment: nothing is queued for the owner
    expect((await s.m.post(`/api/checks/${s.checkId}/comments`, { body: "after the stop" })).status).toBe(201);
    expect(await noticeRows(s.owner.email, "comment")).toEqual([]);

    // a link the owner asks for still comes, and carries no unsubscribe
    expect((await new Client(app.url).post("/api/account/password-reset", { email: s.owner.email })).status).toBe(202);
    const reset = await waitForMail(s.owner.email, /Choose a new Lashwright password/);
    expect(await header(reset, "List-Unsubscribe")).toBeUndefined();
    expect(
      (
        await new Client(app.url).post("/api/account/sign-up", {
          email: s.owner.email,
          name: "Again",
          password: "a-long-password-2",
        })
      ).status,
    ).toBe(202);
    expect(
      await header(await waitForMail(s.owner.email, /already have a Lashwright account/), "List-Unsubscribe"),
    ).toBeUndefined();

    // the account page's setting turns them back on
    expect((await s.o.patch("/api/account", { noticesByEmail: true })).status).toBe(200);
    expect((await s.m.post(`/api/checks/${s.checkId}/comments`, { body: "after turning them on" })).status).toBe(201);
    const back = await waitForMail(s.owner.email, /New comment from/, 20_000);
    expect(back.text).toContain("after turning them on");
    expect(back.text).not.toContain("after the stop");
  });

  it("a stranger's one click stops further invitations to the address", async () => {
    const admin = await makeUser("unsub-admin");
    const a = await signedIn(admin);
    const clubId = (await a.post("/api/clubs", { name: "Unsub Club" })).json.club.id as string;
    const stranger = `unsub-stranger-${crypto.randomUUID().slice(0, 8)}@test.example`;
    expect((await a.post(`/api/clubs/${clubId}/invites`, { email: stranger, role: "mechanic" })).status).toBe(201);
    const mail = await waitForMail(stranger, /invites you/);
    expect(await header(mail, "List-Unsubscribe-Post")).toBe("List-Unsubscribe=One-Click");
    const res = await fetch((await header(mail, "List-Unsubscribe"))!.slice(1, -1), {
      method: "POST",
      headers: { "content-type": "application/x-www-form-urlencoded" },
      body: "List-Unsubscribe=One-Click",
    });
    expect(res.status).toBe(200);
    expect((await a.post(`/api/clubs/${clubId}/invites`, { email: stranger, role: "mentor" })).status).toBe(201);
    await settled(stranger);
    expect((await noticeRows(stranger, "invite")).map((r) => r.status).sort()).toEqual(["dropped", "sent"]);
    expect(await inbox(stranger)).toHaveLength(1);
  });
});
