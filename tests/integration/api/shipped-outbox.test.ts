import { describe, expect, it } from "vitest";
import { signedInClient, type Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership } from "../../support/fixtures";
import { IDS, SHIPPED } from "../../fixtures/shipped-outbox";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

/**
 * An outbox as older apps wrote it: every mutation name and shape ever shipped
 * (tests/fixtures/shipped-outbox.ts), pushed by the people who would have queued it, in order.
 * The server must apply every one: none refused, none held back for later.
 */
const app = appPerFile();

async function one<T>(sql: string, args: unknown[]): Promise<T | undefined> {
  const db = await rawConnection();
  const [rows] = await db.query(sql, args);
  await db.end();
  return (rows as T[])[0];
}

describe("an outbox written by every shipped app version", () => {
  it("is applied whole: every name and shape ever shipped still goes through", async () => {
    const [owner, mentor, borrower] = await makeUsers("old-owner", "old-mentor", "old-borrower");
    const clients: Record<"owner" | "mentor" | "borrower", Client> = {
      owner: await signedInClient(app.url, owner),
      mentor: await signedInClient(app.url, mentor),
      borrower: await signedInClient(app.url, borrower),
    };
    const clubId = (await clients.owner.post("/api/clubs", { name: "Old Outbox Club" })).json.club.id as string;
    await addMembership(clubId, mentor.id, ["mentor"]);
    await addMembership(clubId, borrower.id, ["mechanic"]);
    // fresh ids for this run, so the fixtures' fixed ids never meet a previous run's rows
    const fresh = new Map(Object.values(IDS).map((id) => [id, crypto.randomUUID()]));
    const id = (k: keyof typeof IDS) => fresh.get(IDS[k])!;
    let shareId: string | null = null;
    const phone = {
      owner: { client: crypto.randomUUID(), next: 1 },
      mentor: { client: crypto.randomUUID(), next: 1 },
      borrower: { client: crypto.randomUUID(), next: 1 },
    };

    for (const m of SHIPPED) {
      // the mentor's part needs the check shared with the club, as the owner would have done
      if (m.by === "mentor" && !shareId)
        shareId = (await clients.owner.post(`/api/checks/${id("check")}/shares`, { clubId })).json.share.id as string;
      let text = JSON.stringify(m.args)
        .replaceAll('"$club"', JSON.stringify(clubId))
        .replaceAll('"$share"', JSON.stringify(shareId));
      for (const [from, to] of fresh) text = text.replaceAll(from, to);
      const p = phone[m.by];
      const res = await clients[m.by].post("/api/sync/push", {
        clientId: p.client,
        mutations: [{ id: p.next, name: m.name, args: JSON.parse(text) }],
      });
      expect(res.status, `${m.name} (${m.shape})`).toBe(200);
      expect(res.json, `${m.name} (${m.shape})`).toEqual({ lastMutationId: p.next, rejected: [] });
      p.next++;
    }

    // and each did what it says
    expect(
      await one<{ n: number }>("SELECT COUNT(*) AS n FROM readings WHERE check_id = ?", [id("check")]),
    ).toMatchObject({ n: 3 });
    expect(await one<{ n: number }>("SELECT COUNT(*) AS n FROM checks WHERE id = ?", [id("checkOld")])).toMatchObject({
      n: 0,
    });
    expect(await one<{ n: number }>("SELECT COUNT(*) AS n FROM engines WHERE id = ?", [id("engine16")])).toMatchObject({
      n: 0,
    });
    expect(
      await one<{ n: number }>("SELECT COUNT(*) AS n FROM tray_items WHERE id = ?", [id("trayGone")]),
    ).toMatchObject({ n: 0 });
    expect(
      await one<{ n: number }>("SELECT COUNT(*) AS n FROM comments WHERE check_id = ?", [id("check")]),
    ).toMatchObject({ n: 2 });
    const imported = await one<{ started_at: Date }>("SELECT started_at FROM checks WHERE id = ?", [
      id("checkImported"),
    ]);
    expect(new Date(imported!.started_at).getUTCFullYear()).toBe(2019);
    expect(await one<{ verdict: string }>("SELECT verdict FROM shares WHERE id = ?", [shareId])).toMatchObject({
      verdict: "measure-again",
    });
    expect(
      await one<{ state: string }>("SELECT state FROM borrow_requests WHERE id = ?", [id("borrow")]),
    ).toMatchObject({ state: "agreed" });
  });
});
