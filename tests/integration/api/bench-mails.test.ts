import { describe, expect, it } from "vitest";
import { signedInClient } from "../../support/api";
import { addMembership, makeUser } from "../../support/fixtures";
import { waitForMail } from "../../support/mail";
import { appPerFile } from "../../support/per-file";
import { pushAccepted } from "../../support/push";
import { layout, USUAL_BANDS } from "../../support/engines";
import { makeUsers } from "../../support/users";

/**
 * Mails a mechanic can act on without opening them first: a comment, a verdict and each step of a
 * loan name the engine and the check; an agreed loan says where to collect the shims; subjects are
 * plain words. Also the engine's side nearest the mechanic, which older phones' mutations keep, and
 * what an accepted invitation answers. Engines and readings are invented test data.
 */
const app = appPerFile({ NOTICE_RETRY_SECONDS: "1" });

const signedIn = (u: { email: string; password: string }) => signedInClient(app.url, u);
const SIX = { name: "Bench six", ...layout([1, 5, 3, 6, 2, 4], 2), ...USUAL_BANDS };

describe("mails name the engine and the check", () => {
  it("a comment and a verdict say which engine and check they are about", async () => {
    const [owner, mentor, admin] = await makeUsers("bm-owner", "bm-mentor", "bm-admin");
    const a = await signedIn(admin);
    const clubId = (await a.post("/api/clubs", { name: "Bench Club" })).json.club.id as string;
    await addMembership(clubId, owner.id, ["mechanic"]);
    await addMembership(clubId, mentor.id, ["mentor"]);
    const [o, m] = await Promise.all([signedIn(owner), signedIn(mentor)]);
    const engineId = (await o.post("/api/engines", SIX)).json.engine.id as string;
    const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 23_456 })).json.check.id as string;
    const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
    await waitForMail(mentor.email, /asks for a review/);

    expect((await m.post(`/api/checks/${checkId}/comments`, { body: "Which blade set?" })).status).toBe(201);
    const comment = await waitForMail(owner.email, /New comment from/);
    expect(comment.subject).toContain("on Bench six, check at 23,456 km");
    expect(comment.text).toContain("wrote about Bench six, check at 23,456 km");
    // the owner's answer reaches the mentor, named the same way
    expect((await o.post(`/api/checks/${checkId}/comments`, { body: "The metric one" })).status).toBe(201);
    expect((await waitForMail(mentor.email, /New comment from/)).subject).toContain("Bench six, check at 23,456 km");

    expect((await m.put(`/api/shares/${shareId}/verdict`, { verdict: "measure-again" })).status).toBe(200);
    const verdict = await waitForMail(owner.email, /Review verdict/);
    expect(verdict.subject).toBe("Review verdict: measure again (Bench six, check at 23,456 km)");
    expect(verdict.text).toContain("has reviewed Bench six, check at 23,456 km: measure again.");
  });

  it("a loan's mails name the borrower's engine and check; agreed carries where to collect; subjects in plain words", async () => {
    const [lender, borrower] = await Promise.all([makeUser("bm-lender"), makeUser("bm-borrower")]);
    const l = await signedIn(lender);
    const clubId = (await l.post("/api/clubs", { name: "Loan Club" })).json.club.id as string;
    await addMembership(clubId, borrower.id, ["mechanic"]);
    const b = await signedIn(borrower);
    const engineId = (await b.post("/api/engines", SIX)).json.engine.id as string;
    const checkId = (await b.post(`/api/engines/${engineId}/checks`, { odometer: 8_000 })).json.check.id as string;
    await l.post("/api/tray", { size: 2.55, count: 2 });
    const offer = (
      await l.post(`/api/clubs/${clubId}/pool`, { size: 2.55, count: 2, note: "in the blue drawer by the lathe" })
    ).json.offer;
    const id = (await b.post("/api/borrows", { offerId: offer.id, count: 2, checkId })).json.borrow.id as string;

    const ask = await waitForMail(lender.email, /asks to borrow/);
    expect(ask.subject).toMatch(/asks to borrow 2 × 2\.55 mm for Bench six, check at 8,000 km$/);

    // every shim on offer is held by the request: none left (the screen says so in words, never "0 ×")
    expect((await b.get(`/api/clubs/${clubId}/pool`)).json.items[0]).toMatchObject({ count: 2, available: 0 });
    expect((await l.put(`/api/borrows/${id}`, { move: "agree" })).status).toBe(200);
    const agreed = await waitForMail(borrower.email, /Shim loan agreed/);
    expect(agreed.subject).toBe("Shim loan agreed: 2 × 2.55 mm (Bench six, check at 8,000 km)");
    expect(agreed.text).toContain("Where to collect them");
    expect(agreed.text).toContain("in the blue drawer by the lathe");

    expect((await l.put(`/api/borrows/${id}`, { move: "hand-over" })).status).toBe(200);
    await waitForMail(borrower.email, /Shim loan handed over/);
    // handed over, the offer has none left and is no longer listed
    expect((await b.get(`/api/clubs/${clubId}/pool`)).json.items).toEqual([]);
    expect((await b.put(`/api/borrows/${id}`, { move: "give-back" })).status).toBe(200);
    const back = await waitForMail(lender.email, /Shim loan/);
    expect(back.subject).toBe("Shim loan on its way back: 2 × 2.55 mm (Bench six, check at 8,000 km)");
    expect(back.subject + back.text).not.toMatch(/giving-back/);
    // the lender reads the state from their side
    expect(back.text).toContain("on the way back to you");
  });
});

describe("the side nearest the mechanic", () => {
  it('is stored by "engine.put/3" and kept by an older phone\'s "/1" and "/2"; a new engine has its exhausts nearest', async () => {
    const u = await makeUser("bm-side");
    const c = await signedIn(u);
    const id = crypto.randomUUID();
    const base = {
      id,
      ...SIX,
      measuredHot: false,
      displayUnit: "mm",
      odometerUnit: "km",
      mirrored: true,
      firingAngles: null,
      shimDiameter: null,
      assembledShim: null,
    };
    await pushAccepted(c, [{ name: "engine.put/3", args: { ...base, shimPosition: "under", nearSide: "intake" } }]);
    const side = async () => (await c.get(`/api/engines/${id}`)).json.engine.nearSide;
    expect(await side()).toBe("intake");
    await pushAccepted(c, [
      { name: "engine.put/2", args: { ...base, name: "Bench six, renamed", shimPosition: "under" } },
    ]);
    await pushAccepted(c, [{ name: "engine.put/1", args: { ...base, name: "Bench six, again" } }]);
    expect(await side()).toBe("intake");
    expect((await c.get(`/api/engines/${id}`)).json.engine.name).toBe("Bench six, again");
    const fresh = (await c.post("/api/engines", SIX)).json.engine;
    expect(fresh.nearSide).toBe("exhaust");
  });
});

describe("an accepted invitation", () => {
  it("answers the club's name, so the page can say which club was joined", async () => {
    const [admin, guest] = await Promise.all([makeUser("bm-inv-admin"), makeUser("bm-inv-guest")]);
    const a = await signedIn(admin);
    const clubId = (await a.post("/api/clubs", { name: "Tappet Night" })).json.club.id as string;
    expect((await a.post(`/api/clubs/${clubId}/invites`, { email: guest.email, role: "mechanic" })).status).toBe(201);
    const mail = await waitForMail(guest.email, /invites you/);
    const token = decodeURIComponent(/\/invite\?token=([A-Za-z0-9_%-]+)/.exec(mail.text)![1]!);
    const g = await signedIn(guest);
    expect((await g.post("/api/invites/accept", { token })).json).toEqual({ clubId, clubName: "Tappet Night" });
  });
});
