import { afterAll, describe, expect, it } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Client } from "../support/api";
import { allSynced, baseUrl, persistentPhone, signInAs, tapReading } from "../support/browser";
import { historyRows, rawConnection } from "../support/db";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";

/**
 * The page is closed at the two worst moments: after readings are stored on the phone but before
 * any push, and in the middle of a push (the server has committed, the answer never arrives).
 * Each time the next start sends what waits, and the server holds every reading once.
 */
const profile = mkdtempSync(path.join(tmpdir(), "lashwright-durable-"));
const open = () => persistentPhone(profile);
let ctx: BrowserContext | undefined;
afterAll(async () => {
  await ctx?.close();
  rmSync(profile, { recursive: true, force: true });
});

async function server(checkId: string) {
  const db = await rawConnection();
  const [rows] = await db.query("SELECT valve, feeler_go FROM readings WHERE check_id = ? ORDER BY valve", [checkId]);
  const history = await historyRows([checkId], db);
  await db.end();
  return {
    rows: (rows as { valve: string; feeler_go: string }[]).map((r) => `${r.valve} ${Number(r.feeler_go)}`),
    history,
  };
}

async function tap(page: Page, taps: Record<string, string>) {
  for (const [valve, blade] of Object.entries(taps)) await tapReading(page, valve, blade);
}

describe("closing the page at the worst moments", () => {
  it("loses nothing and sends nothing twice", async () => {
    const u = await makeUser("durable");
    const api = new Client(baseUrl());
    expect(await api.signIn("password", { email: u.email, password: u.password })).toBeNull();
    const engineId = (await api.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const checkId = (await api.post(`/api/engines/${engineId}/checks`, { odometer: 5_100 })).json.check.id as string;
    const checkUrl = `${baseUrl()}/check?id=${checkId}&step=measure`;

    ctx = await open();
    let page = ctx.pages()[0] ?? (await ctx.newPage());
    await signInAs(page, u.email, u.password);
    await page.getByRole("link", { name: /Test four/ }).waitFor();
    await page.goto(checkUrl);
    await page.getByRole("group", { name: "Feeler blades for I1.1" }).waitFor();

    // 1. stored on the phone, never pushed: no signal, then the page is gone
    await ctx.setOffline(true);
    await tap(page, { "I1.1": "0.15", "I1.2": "0.13", "E1.1": "0.25", "E1.2": "0.23" });
    await ctx.close();
    expect((await server(checkId)).rows).toEqual([]);

    ctx = await open();
    page = ctx.pages()[0] ?? (await ctx.newPage());
    await page.goto(checkUrl);
    await expect.poll(async () => (await server(checkId)).rows.length, { timeout: 20_000 }).toBe(4);
    await allSynced(page);

    // 2. the push reaches the server and commits, but the page closes before the answer
    let committed!: () => void;
    const pushed = new Promise<void>((r) => (committed = r));
    await ctx.route("**/api/sync/push", async (route) => {
      // a background sync may send the first taps on its own; the cut comes with the last one
      const body = route.request().postDataJSON() as { mutations: { args: { reading?: { valve: string } } }[] };
      if (!body.mutations.some((m) => m.args.reading?.valve === "E2.2")) return route.continue();
      const res = await route.fetch();
      expect(res.status()).toBe(200);
      committed();
      // the answer is never delivered
    });
    await tap(page, { "I2.1": "0.18", "I2.2": "0.15", "E2.1": "0.28", "E2.2": "0.30" });
    await page
      .getByTestId("sync-line")
      .getByRole("button", { name: "Sync now" })
      .tap()
      .catch(() => undefined);
    await pushed;
    await ctx.close();
    const afterCut = await server(checkId);
    expect(afterCut.rows).toHaveLength(8); // the server has them: only the answer was lost

    ctx = await open();
    page = ctx.pages()[0] ?? (await ctx.newPage());
    let pushes = 0;
    page.on("request", (r) => r.url().endsWith("/api/sync/push") && pushes++);
    await page.goto(checkUrl);
    await allSynced(page);
    expect(pushes).toBeGreaterThan(0); // the phone did send its outbox again
    const end = await server(checkId);
    expect(end.rows).toEqual([
      "E1.1 0.25",
      "E1.2 0.23",
      "E2.1 0.28",
      "E2.2 0.3",
      "I1.1 0.15",
      "I1.2 0.13",
      "I2.1 0.18",
      "I2.2 0.15",
    ]);
    // a reading applied a second time would have left its first value in the history
    expect(end.history).toBe(0);
    const db = await rawConnection();
    const [clients] = await db.query("SELECT last_mutation_id FROM sync_clients WHERE user_id = ?", [u.id]);
    const [refused] = await db.query(
      "SELECT COUNT(*) AS n FROM rejected_mutations r JOIN sync_clients c ON c.id = r.client_id WHERE c.user_id = ?",
      [u.id],
    );
    await db.end();
    expect((clients as unknown[]).length).toBe(1);
    expect(Number((refused as { n: number }[])[0]!.n)).toBe(0);
  });
});
