import { describe, expect, it } from "vitest";
import { signedInClient, type Client } from "../../support/api";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { rawConnection } from "../../support/db";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

/**
 * Attacks on the club rules, each played through the API as a member would: what a membership
 * held open after it ended, one club reading another's review thread, a comment id reused, a
 * mentor passing their own check, and names carrying control characters.
 */
const app = appPerFile({ NOTICE_RETRY_SECONDS: "1" });

type U = Awaited<ReturnType<typeof makeUser>>;
const signedIn = (u: U) => signedInClient(app.url, u);

/** Notices queued to a user (every mail starts as a row there), read around the code under test. */
async function noticesTo(userId: string, kind?: string): Promise<number> {
  const c = await rawConnection();
  try {
    const [rows] = await c.query(
      `SELECT COUNT(*) AS n FROM notices WHERE to_user_id = ?${kind ? " AND kind = ?" : ""}`,
      kind ? [userId, kind] : [userId],
    );
    return Number((rows as { n: number }[])[0]!.n);
  } finally {
    await c.end();
  }
}

/** A club with an admin; each other user is added with the roles given. */
async function clubWith(name: string, members: [U, string[]][]) {
  const admin = await makeUser("ar-admin");
  const a = await signedIn(admin);
  const clubId = (await a.post("/api/clubs", { name })).json.club.id as string;
  for (const [u, roles] of members) await addMembership(clubId, u.id, roles);
  return { admin, a, clubId };
}

async function checkOf(c: Client) {
  const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  return (await c.post(`/api/engines/${engineId}/checks`, { odometer: 30_000 })).json.check.id as string;
}

// ENGINE_FOUR's intake band is 0.10-0.20 mm (invented test data); 0.15 is in the middle
const aReading = (valve: string) => ({ readings: [{ valve, installedStamp: 2.6, feelerGo: 0.15, measured: 0.15 }] });

describe("a membership's end ends what it held open", () => {
  async function setUp() {
    const [owner, mentor, other] = await makeUsers("ar-owner", "ar-mentor", "ar-other");
    const club = await clubWith("Rules Club", [
      [owner, ["mechanic"]],
      [mentor, ["mentor"]],
      [other, ["mechanic"]],
    ]);
    const o = await signedIn(owner);
    const m = await signedIn(mentor);
    const x = await signedIn(other);
    const checkId = await checkOf(o);
    expect((await o.put(`/api/checks/${checkId}/readings`, aReading("I1.1"))).status).toBe(200);
    const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId: club.clubId })).json.share.id as string;
    // the owner offers shims; the other member asks for some (open), and an earlier loan is handed over
    await o.post("/api/tray", { size: 2.45, count: 5 });
    const offer = (await o.post(`/api/clubs/${club.clubId}/pool`, { size: 2.45, count: 4 })).json.offer;
    const handed = (await x.post("/api/borrows", { offerId: offer.id, count: 1 })).json.borrow.id as string;
    expect((await o.put(`/api/borrows/${handed}`, { move: "agree" })).status).toBe(200);
    expect((await o.put(`/api/borrows/${handed}`, { move: "hand-over" })).status).toBe(200);
    const openAsk = (await x.post("/api/borrows", { offerId: offer.id, count: 1 })).json.borrow.id as string;
    // the other member offers too, and the owner asks for theirs (open, agreed)
    await x.post("/api/tray", { size: 2.5, count: 2 });
    const theirOffer = (await x.post(`/api/clubs/${club.clubId}/pool`, { size: 2.5, count: 2 })).json.offer;
    const ownersAsk = (await o.post("/api/borrows", { offerId: theirOffer.id, count: 1 })).json.borrow.id as string;
    expect((await x.put(`/api/borrows/${ownersAsk}`, { move: "agree" })).status).toBe(200);
    expect((await m.get(`/api/checks/${checkId}`)).status).toBe(200);
    return { owner, mentor, other, o, m, x, ...club, checkId, shareId, offer, handed, openAsk, theirOffer, ownersAsk };
  }

  async function assertEnded(s: Awaited<ReturnType<typeof setUp>>) {
    // the club's mentor reads nothing of the check any more, nor readings written after the end
    expect((await s.o.put(`/api/checks/${s.checkId}/readings`, aReading("I1.2"))).status).toBe(200);
    for (const path of [
      `/api/checks/${s.checkId}`,
      `/api/checks/${s.checkId}/readings`,
      `/api/checks/${s.checkId}/comments`,
    ])
      expect((await s.m.get(path)).status).toBe(404);
    expect((await s.m.put(`/api/shares/${s.shareId}/verdict`, { verdict: "close-up" })).status).toBe(404);
    expect((await s.m.get(`/api/clubs/${s.clubId}/queue`)).json.items).toEqual([]);
    // the owner sees the share withdrawn
    expect((await s.o.get(`/api/checks/${s.checkId}/shares`)).json.items[0].withdrawnAt).not.toBeNull();
    // their offer is gone from the pool; asking for it answers "no such" and mails nobody
    expect(((await s.x.get(`/api/clubs/${s.clubId}/pool`)).json.items as { id: string }[]).map((i) => i.id)).toEqual([
      s.theirOffer.id,
    ]);
    const before = await noticesTo(s.owner.id);
    expect((await s.x.post("/api/borrows", { offerId: s.offer.id, count: 1 })).status).toBe(404);
    // the open requests both ways are ended, so no step on them mails the one who left
    const xs = Object.fromEntries(
      ((await s.x.get("/api/borrows")).json.items as { id: string; state: string }[]).map((b) => [b.id, b.state]),
    );
    expect(xs).toMatchObject({ [s.openAsk]: "declined", [s.ownersAsk]: "withdrawn", [s.handed]: "handed-over" });
    expect((await s.x.put(`/api/borrows/${s.ownersAsk}`, { move: "hand-over" })).status).toBe(409);
    expect((await s.x.put(`/api/borrows/${s.openAsk}`, { move: "withdraw" })).status).toBe(409);
    const pushed = await s.x.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "borrow.ask/1", args: { id: crypto.randomUUID(), offerId: s.offer.id, count: 1 } }],
    });
    expect(pushed.json.rejected).toHaveLength(1);
    expect(await noticesTo(s.owner.id)).toBe(before);
    // a loan already handed over stays until the shims come back
    expect((await s.x.put(`/api/borrows/${s.handed}`, { move: "give-back" })).json.borrow.state).toBe("giving-back");
    expect((await s.o.put(`/api/borrows/${s.handed}`, { move: "settle" })).json.borrow.state).toBe("settled");
  }

  it("removed by an admin: the mentor's read answers 404, the offer leaves the pool, an ask mails nobody", async () => {
    const s = await setUp();
    expect((await s.a.del(`/api/clubs/${s.clubId}/members/${s.owner.id}`)).status).toBe(204);
    await assertEnded(s);
    const log = (await s.a.get(`/api/clubs/${s.clubId}/log`)).json.items as { action: string; detail: string }[];
    expect(log[0]).toMatchObject({
      action: "roles-changed",
      detail: expect.stringMatching(/→ none; ended 1 share, 1 offer, 2 requests/),
    });
  });

  it("leaving: the member removes themselves, with the same effect", async () => {
    const s = await setUp();
    expect((await s.o.del(`/api/clubs/${s.clubId}/members/${s.owner.id}`)).status).toBe(204);
    expect((await s.o.get(`/api/clubs/${s.clubId}`)).status).toBe(404);
    await assertEnded(s);
    // a mechanic still cannot remove anyone else
    expect((await s.x.del(`/api/clubs/${s.clubId}/members/${s.mentor.id}`)).status).toBe(403);
  });
});

describe("review threads and verdicts", () => {
  it("a comment id already used on another check is refused, not dropped (409 on REST, a reason on push)", async () => {
    const [owner, mentor] = await Promise.all([makeUser("ar-cid-owner"), makeUser("ar-cid-mentor")]);
    const { clubId } = await clubWith("Comment Club", [
      [owner, ["mechanic"]],
      [mentor, ["mentor"]],
    ]);
    const o = await signedIn(owner);
    const m = await signedIn(mentor);
    const [first, second] = [await checkOf(o), await checkOf(o)];
    await o.post(`/api/checks/${second}/shares`, { clubId });
    const id = crypto.randomUUID();
    expect((await o.post(`/api/checks/${first}/comments`, { id, body: "first check" })).status).toBe(201);
    // the same comment sent again is the one stored
    expect((await o.post(`/api/checks/${first}/comments`, { id, body: "first check" })).status).toBe(201);
    const rest = await o.post(`/api/checks/${second}/comments`, { id, body: "second check" });
    expect(rest.status).toBe(409);
    expect(rest.json.error.message).toMatch(/already used/);
    const pushed = await o.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "comment.add/1", args: { id, checkId: second, body: "second check" } }],
    });
    expect(pushed.json.rejected).toEqual([
      { id: 1, name: "comment.add/1", reason: expect.stringMatching(/already used/) },
    ]);
    // nor may someone else take an id on the same check
    expect((await m.post(`/api/checks/${second}/comments`, { id, body: "mine now" })).status).toBe(409);
    expect((await o.get(`/api/checks/${second}/comments`)).json.items).toEqual([]);
  });

  it("a check shared with two clubs: each club's mentors read their own thread and the owner's comments; the owner reads all", async () => {
    const [owner, mentorA, mentorB, both] = await makeUsers("ar-two-owner", "ar-two-ma", "ar-two-mb", "ar-two-both");
    const A = await clubWith("Club A", [
      [owner!, ["mechanic"]],
      [mentorA!, ["mentor"]],
      [both!, ["mentor"]],
    ]);
    const B = await clubWith("Club B", [
      [owner!, ["mechanic"]],
      [mentorB!, ["mentor"]],
      [both!, ["mentor"]],
    ]);
    const o = await signedIn(owner!);
    const [ma, mb, mab] = [await signedIn(mentorA!), await signedIn(mentorB!), await signedIn(both!)];
    const checkId = await checkOf(o);
    await o.post(`/api/checks/${checkId}/shares`, { clubId: A.clubId });
    await o.post(`/api/checks/${checkId}/shares`, { clubId: B.clubId });
    expect((await ma.post(`/api/checks/${checkId}/comments`, { body: "A: E2.1 looks tight" })).status).toBe(201);
    const pushed = await mb.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [
        { id: 1, name: "comment.add/1", args: { id: crypto.randomUUID(), checkId, body: "B: measure again warm" } },
      ],
    });
    expect(pushed.json.rejected).toEqual([]);
    expect((await o.post(`/api/checks/${checkId}/comments`, { body: "owner: thanks all" })).status).toBe(201);
    const bodies = async (c: Client) =>
      ((await c.get(`/api/checks/${checkId}/comments`)).json.items as { body: string }[]).map((x) => x.body).sort();
    expect(await bodies(o)).toEqual(["A: E2.1 looks tight", "B: measure again warm", "owner: thanks all"]);
    expect(await bodies(ma)).toEqual(["A: E2.1 looks tight", "owner: thanks all"]);
    expect(await bodies(mb)).toEqual(["B: measure again warm", "owner: thanks all"]);
    // a mentor of both clubs reads both threads
    expect(await bodies(mab)).toEqual(["A: E2.1 looks tight", "B: measure again warm", "owner: thanks all"]);
    // club B's share withdrawn: its mentor reads nothing; A's thread is untouched
    const bShare = ((await o.get(`/api/checks/${checkId}/shares`)).json.items as { id: string; clubId: string }[]).find(
      (s) => s.clubId === B.clubId,
    )!;
    expect((await o.del(`/api/shares/${bShare.id}`)).status).toBe(204);
    expect((await mb.get(`/api/checks/${checkId}/comments`)).status).toBe(404);
    expect(await bodies(ma)).toEqual(["A: E2.1 looks tight", "owner: thanks all"]);
  });

  it("a mentor cannot give a verdict on their own check, by REST or by push; another mentor can", async () => {
    const [mentorOwner, mentor] = await Promise.all([makeUser("ar-self-mentor"), makeUser("ar-self-other")]);
    const { clubId } = await clubWith("Self Club", [
      [mentorOwner, ["mechanic", "mentor"]],
      [mentor, ["mentor"]],
    ]);
    const self = await signedIn(mentorOwner);
    const checkId = await checkOf(self);
    const shareId = (await self.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
    const rest = await self.put(`/api/shares/${shareId}/verdict`, { verdict: "close-up" });
    expect(rest.status).toBe(403);
    expect(rest.json.error.message).toMatch(/own check/);
    const pushed = await self.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "verdict.set/1", args: { shareId, verdict: "close-up" } }],
    });
    expect(pushed.json.rejected).toEqual([
      { id: 1, name: "verdict.set/1", reason: expect.stringMatching(/own check/) },
    ]);
    expect((await self.get(`/api/checks/${checkId}/shares`)).json.items[0].verdict).toBeNull();
    const m = await signedIn(mentor);
    expect((await m.put(`/api/shares/${shareId}/verdict`, { verdict: "close-up" })).json.share.verdict).toBe(
      "close-up",
    );
  });
});

describe("names with control characters", () => {
  it("an engine, club, display name or pool note with a line break or other control character is refused and changes nothing", async () => {
    const u = await makeUser("ar-names");
    const c = await signedIn(u);
    const lure = '=HYPERLINK("http://evil.example/x","Open")\nTest four';
    const engine = await c.post("/api/engines", { ...ENGINE_FOUR, name: lure });
    expect(engine.status).toBe(422);
    expect(engine.json.error.fields).toEqual({ name: "no line breaks, tabs or other control characters" });
    expect((await c.get("/api/engines")).json.items).toEqual([]);
    const pushed = await c.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [
        { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: crypto.randomUUID(), name: "Tab\there" } },
      ],
    });
    expect(pushed.json.rejected).toEqual([
      { id: 1, name: "engine.put/1", reason: expect.stringMatching(/control characters/) },
    ]);
    expect((await c.get("/api/engines")).json.items).toEqual([]);

    const club = await c.post("/api/clubs", { name: "Club\r\nBcc: everyone@example.com" });
    expect(club.status).toBe(422);
    expect((await c.get("/api/clubs")).json.items).toEqual([]);

    expect((await c.patch("/api/account", { name: "Mara\u202Eevil" })).status).toBe(422);
    const db = await rawConnection();
    try {
      const [rows] = await db.query("SELECT name FROM users WHERE id = ?", [u.id]);
      expect((rows as { name: string }[])[0]!.name).toBe("Test ar-names");
    } finally {
      await db.end();
    }

    const ok = (await c.post("/api/clubs", { name: "Tuesday nights" })).json.club.id as string;
    await c.post("/api/tray", { size: 2.45, count: 1 });
    expect((await c.post(`/api/clubs/${ok}/pool`, { size: 2.45, count: 1, note: "by the\u0000lathe" })).status).toBe(
      422,
    );
    expect((await c.get(`/api/clubs/${ok}/pool`)).json.items).toEqual([]);
  });
});
