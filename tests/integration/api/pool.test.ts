import { describe, expect, it } from "vitest";
import { Client, signedInClient } from "../../support/api";
import { addMembership } from "../../support/fixtures";
import { waitForMail } from "../../support/mail";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

const app = appPerFile();

const signedIn = (u: { email: string; password: string }) => signedInClient(app.url, u);

async function club() {
  const [lender, borrower, second, stranger, elsewhere] = await makeUsers(
    "pl-lender",
    "pl-borrower",
    "pl-second",
    "pl-stranger",
    "pl-elsewhere",
  );
  const l = await signedIn(lender!);
  const clubId = (await l.post("/api/clubs", { name: "Pool Club" })).json.club.id as string;
  await addMembership(clubId, borrower!.id, ["mechanic"]);
  await addMembership(clubId, second!.id, ["mechanic"]);
  const e = await signedIn(elsewhere!);
  await e.post("/api/clubs", { name: "Another Club" });
  return {
    lender: lender!,
    borrower: borrower!,
    l,
    b: await signedIn(borrower!),
    b2: await signedIn(second!),
    s: await signedIn(stranger!),
    e,
    clubId,
  };
}

const trayOf = async (c: Client, size: number) =>
  ((await c.get("/api/tray")).json.items as { size: number; count: number }[])
    .filter((t) => Math.abs(t.size - size) < 1e-9)
    .reduce((n, t) => n + t.count, 0);

describe("club shim pool through the API", () => {
  it("offer, ask, agree, hand over, give back and settle, with the trays following each side's own steps", async () => {
    const t = await club();
    await t.l.post("/api/tray", { size: 2.45, count: 3, shimDiameter: 9.48 });
    // an offer larger than the tray is refused
    expect((await t.l.post(`/api/clubs/${t.clubId}/pool`, { size: 2.45, count: 4, shimDiameter: 9.48 })).status).toBe(
      409,
    );
    const offer = (
      await t.l.post(`/api/clubs/${t.clubId}/pool`, { size: 2.45, count: 2, shimDiameter: 9.48, note: "by the lathe" })
    ).json.offer;
    expect(offer).toMatchObject({ count: 2, note: "by the lathe" });
    const seen = (await t.b.get(`/api/clubs/${t.clubId}/pool`)).json.items;
    expect(seen).toEqual([
      expect.objectContaining({
        id: offer.id,
        size: 2.45,
        available: 2,
        ownerName: expect.any(String),
        shimDiameter: 9.48,
      }),
    ]);
    // only the shims and the note: no tray ids, e-mail or anything else of the lender's
    expect(JSON.stringify(seen)).not.toMatch(/@test\.example|trayId|email/);

    const ask = await t.b.post("/api/borrows", { offerId: offer.id, count: 1 });
    expect(ask.status).toBe(201);
    const id = ask.json.borrow.id as string;
    await waitForMail(t.lender.email, /asks to borrow 1 × 2\.45 mm/);
    expect((await t.b.put(`/api/borrows/${id}`, { move: "agree" })).status).toBe(409); // only the lender agrees
    expect((await t.l.put(`/api/borrows/${id}`, { move: "agree" })).json.borrow.state).toBe("agreed");
    expect(await trayOf(t.l, 2.45)).toBe(3); // nothing moves until the shims change hands
    expect((await t.l.put(`/api/borrows/${id}`, { move: "hand-over" })).json.borrow.state).toBe("handed-over");
    expect(await trayOf(t.l, 2.45)).toBe(2);
    expect(await trayOf(t.b, 2.45)).toBe(1);
    expect((await t.b.get(`/api/clubs/${t.clubId}/pool`)).json.items[0]).toMatchObject({ count: 1, available: 1 });
    await waitForMail(t.borrower.email, /handed over/);
    // given back as other shims (a 2.50 from the borrower's tray)
    await t.b.post("/api/tray", { size: 2.5, count: 1 });
    expect((await t.b.put(`/api/borrows/${id}`, { move: "give-back", returnSize: 2.5 })).json.borrow.state).toBe(
      "giving-back",
    );
    expect(await trayOf(t.b, 2.5)).toBe(0);
    expect(await trayOf(t.l, 2.5)).toBe(0); // the lender's tray waits for the lender
    expect((await t.l.put(`/api/borrows/${id}`, { move: "settle" })).json.borrow.state).toBe("settled");
    expect(await trayOf(t.l, 2.5)).toBe(1);
    // a step that no longer applies is refused with the reason
    const late = await t.b.put(`/api/borrows/${id}`, { move: "withdraw" });
    expect(late.status).toBe(409);
    expect(late.json.error.message).toMatch(/settled/);
  });

  it("nobody outside the club sees the pool or the loans", async () => {
    const t = await club();
    await t.l.post("/api/tray", { size: 2.6, count: 1 });
    const offer = (await t.l.post(`/api/clubs/${t.clubId}/pool`, { size: 2.6, count: 1 })).json.offer;
    const loan = (await t.b.post("/api/borrows", { offerId: offer.id, count: 1 })).json.borrow;
    for (const c of [t.s, t.e]) {
      expect((await c.get(`/api/clubs/${t.clubId}/pool`)).status).toBe(404);
      expect((await c.post(`/api/clubs/${t.clubId}/pool`, { size: 2.6, count: 1 })).status).toBe(404);
      expect((await c.post("/api/borrows", { offerId: offer.id, count: 1 })).status).toBe(404);
      expect((await c.put(`/api/borrows/${loan.id}`, { move: "agree" })).status).toBe(404);
      expect((await c.del(`/api/pool/${offer.id}`)).status).toBe(404);
      expect((await c.get("/api/borrows")).json.items).toEqual([]);
    }
    // a member cannot take back someone else's offer
    expect((await t.b.del(`/api/pool/${offer.id}`)).status).toBe(404);
    expect((await t.l.del(`/api/pool/${offer.id}`)).status).toBe(204);
    expect((await t.b.get("/api/borrows")).json.items[0].state).toBe("declined");
  });

  it("two members racing for the last shim: one gets it, the other is told, counts never go below zero", async () => {
    const t = await club();
    await t.l.post("/api/tray", { size: 2.75, count: 1 });
    const offer = (await t.l.post(`/api/clubs/${t.clubId}/pool`, { size: 2.75, count: 1 })).json.offer;
    for (let round = 0; round < 3; round++) {
      const [x, y] = await Promise.all([
        t.b.post("/api/borrows", { offerId: offer.id, count: 1 }),
        t.b2.post("/api/borrows", { offerId: offer.id, count: 1 }),
      ]);
      const statuses = [x.status, y.status];
      if (round === 0) {
        expect(statuses.sort()).toEqual([201, 409]);
        expect([x, y].find((r) => r.status === 409)!.json.error.message).toMatch(/left on offer/);
      } else expect(statuses).toEqual([409, 409]);
    }
    const pool = (await t.b.get(`/api/clubs/${t.clubId}/pool`)).json.items[0];
    expect(pool).toMatchObject({ count: 1, available: 0 });
    // and through sync, as from a phone in a garage: refused with the same reason
    const pushed = await t.b2.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "borrow.ask/1", args: { id: crypto.randomUUID(), offerId: offer.id, count: 1 } }],
    });
    expect(pushed.json.rejected).toEqual([
      { id: 1, name: "borrow.ask/1", reason: expect.stringMatching(/left on offer/) },
    ]);
  });

  it("offers and requests made offline arrive through sync push once", async () => {
    const t = await club();
    await t.l.post("/api/tray", { size: 2.8, count: 2 });
    const offerId = crypto.randomUUID();
    const lc = crypto.randomUUID();
    const offerPush = {
      clientId: lc,
      mutations: [
        {
          id: 1,
          name: "pool.offer/1",
          args: { id: offerId, clubId: t.clubId, size: 2.8, count: 2, shimDiameter: null, note: null },
        },
      ],
    };
    expect((await t.l.post("/api/sync/push", offerPush)).json.rejected).toEqual([]);
    expect((await t.l.post("/api/sync/push", offerPush)).json.rejected).toEqual([]);
    const bc = crypto.randomUUID();
    const askId = crypto.randomUUID();
    const ask = { clientId: bc, mutations: [{ id: 1, name: "borrow.ask/1", args: { id: askId, offerId, count: 2 } }] };
    expect((await t.b.post("/api/sync/push", ask)).json.rejected).toEqual([]);
    expect((await t.b.post("/api/sync/push", ask)).json.rejected).toEqual([]);
    expect((await t.b.get(`/api/clubs/${t.clubId}/pool`)).json.items).toEqual([
      expect.objectContaining({ id: offerId, available: 0 }),
    ]);
    expect((await t.b.get("/api/borrows")).json.items.map((b: { id: string }) => b.id)).toEqual([askId]);
    const move = await t.l.post("/api/sync/push", {
      clientId: lc,
      mutations: [{ id: 2, name: "borrow.move/1", args: { id: askId, move: "agree" } }],
    });
    expect(move.json.rejected).toEqual([]);
    expect((await t.b.get("/api/borrows")).json.items[0].state).toBe("agreed");
  });
});
