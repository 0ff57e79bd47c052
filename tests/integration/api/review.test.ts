import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { waitForMail } from "../../support/mail";
import { type App } from "../../support/server";
import { appPerFile } from "../../support/per-file";

const app = appPerFile({ NOTICE_RETRY_SECONDS: "1" });

async function signedIn(a: App, u: { email: string; password: string }) {
  const c = new Client(a.url);
  expect(await c.signIn("password", { email: u.email, password: u.password })).toBeNull();
  return c;
}

async function sharedCheck(a: App) {
  const [owner, mentor, admin] = await Promise.all([makeUser("rv-owner"), makeUser("rv-mentor"), makeUser("rv-admin")]);
  const adminC = await signedIn(a, admin);
  const clubId = (await adminC.post("/api/clubs", { name: "Review Club" })).json.club.id as string;
  await addMembership(clubId, owner.id, ["mechanic"]);
  await addMembership(clubId, mentor.id, ["mentor"]);
  const o = await signedIn(a, owner);
  const m = await signedIn(a, mentor);
  const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 30_000 })).json.check.id as string;
  const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
  return { owner, mentor, admin, adminC, o, m, clubId, checkId, shareId };
}

describe("review through the API", () => {
  it("a review request reaches the club's mentors; withdrawing the share removes access at once", async () => {
    const s = await sharedCheck(app);
    await waitForMail(s.mentor.email, /asks for a review/);
    expect((await s.m.get(`/api/checks/${s.checkId}`)).status).toBe(200);
    expect((await s.m.post(`/api/checks/${s.checkId}/comments`, { body: "Which blade set?" })).status).toBe(201);
    await waitForMail(s.owner.email, /New comment from/);
    expect((await s.o.del(`/api/shares/${s.shareId}`)).status).toBe(204);
    expect((await s.m.get(`/api/checks/${s.checkId}`)).status).toBe(404);
    expect((await s.m.get(`/api/checks/${s.checkId}/comments`)).status).toBe(404);
    expect((await s.m.put(`/api/shares/${s.shareId}/verdict`, { verdict: "close-up" })).status).toBe(404);
  });

  it("a removed mentor loses access at once, not at token expiry", async () => {
    const s = await sharedCheck(app);
    expect((await s.m.get(`/api/checks/${s.checkId}`)).status).toBe(200);
    expect((await s.adminC.put(`/api/clubs/${s.clubId}/members/${s.mentor.id}`, { roles: ["mechanic"] })).status).toBe(
      200,
    );
    expect((await s.m.get(`/api/checks/${s.checkId}`)).status).toBe(404);
  });

  it("comments and verdicts made offline arrive through sync push, are applied once, and send their notices", async () => {
    const s = await sharedCheck(app);
    const clientId = crypto.randomUUID();
    const commentId = crypto.randomUUID();
    const mutations = [
      {
        id: 1,
        name: "comment.add/1",
        args: { id: commentId, checkId: s.checkId, body: "E2.1 looks tight, measure again", valve: "E2.1" },
      },
      { id: 2, name: "verdict.set/1", args: { shareId: s.shareId, verdict: "measure-again" } },
    ];
    const first = await s.m.post("/api/sync/push", { clientId, mutations });
    expect(first.json).toEqual({ lastMutationId: 2, rejected: [] });
    // the answer was lost: the phone sends the same batch again
    expect((await s.m.post("/api/sync/push", { clientId, mutations })).json).toEqual({
      lastMutationId: 2,
      rejected: [],
    });
    const thread = (await s.o.get(`/api/checks/${s.checkId}/comments`)).json.items as { id: string; valve: string }[];
    expect(thread.map((c) => [c.id, c.valve])).toEqual([[commentId, "E2.1"]]);
    expect((await s.o.get(`/api/checks/${s.checkId}/shares`)).json.items[0].verdict).toBe("measure-again");
    await waitForMail(s.owner.email, /Review verdict: measure again/);
    await waitForMail(s.owner.email, /New comment from/);
    // the owner cannot give a verdict through sync either, and a stranger cannot comment
    const own = await s.o.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "verdict.set/1", args: { shareId: s.shareId, verdict: "close-up" } }],
    });
    expect(own.json.rejected).toEqual([{ id: 1, name: "verdict.set/1", reason: expect.stringMatching(/mentor/) }]);
    const stranger = await signedIn(app, await makeUser("rv-stranger"));
    const theirs = await stranger.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [
        { id: 1, name: "comment.add/1", args: { id: crypto.randomUUID(), checkId: s.checkId, body: "hello" } },
      ],
    });
    expect(theirs.json.rejected).toHaveLength(1);
    expect((await s.o.get(`/api/checks/${s.checkId}/shares`)).json.items[0].verdict).toBe("measure-again");
    expect((await s.o.get(`/api/checks/${s.checkId}/comments`)).json.items).toHaveLength(1);
  });
});
