import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { planShims, shimSeries } from "@/lib/lash";
import { allSynced, backOnline, persistentPhone, signInAs } from "../support/browser";
import { historyRows, queryRows, rawConnection } from "../support/db";
import { makeUser } from "../support/fixtures";
import { syncedOnline } from "../support/online";

/**
 * The garage without a signal: sign in once online, then with the network cut create an engine, a
 * check and 16 readings by taps only; reload; close the browser and open it again offline and open
 * the later steps (their code is loaded only when shown); then go online and see the server hold
 * exactly those rows, once; fit and re-check offline again.
 */
const profile = mkdtempSync(path.join(tmpdir(), "lashwright-profile-"));
let ctx: BrowserContext;

const open = () => persistentPhone(profile);

afterAll(async () => {
  await ctx?.close();
  rmSync(profile, { recursive: true, force: true });
});

// The readings to tap (mm blades of the default metric set); intake band 0.10-0.20, exhaust 0.20-0.30.
const TAPS: Record<string, string> = {
  "I1.1": "0.15",
  "I1.2": "0.13",
  "E1.1": "0.25",
  "E1.2": "0.23",
  "I2.1": "0.15",
  "I2.2": "0.08",
  "E2.1": "0.33",
  "E2.2": "0.25",
  "I3.1": "0.18",
  "I3.2": "0.15",
  "E3.1": "0.18",
  "E3.2": "0.25",
  "I4.1": "0.23",
  "I4.2": "0.15",
  "E4.1": "0.28",
  "E4.2": "0.25",
};
const BLADES = [
  0.02, 0.03, 0.04, 0.05, 0.06, 0.07, 0.08, 0.09, 0.1, 0.13, 0.15, 0.18, 0.2, 0.23, 0.25, 0.28, 0.3, 0.33, 0.38, 0.4,
  0.45, 0.5,
];

const serverReadings = (checkId: string) =>
  queryRows<{
    valve: string;
    round: number;
    installed_stamp: string;
    feeler_go: string;
    feeler_no_go: string;
    measured: string;
  }>(
    "SELECT valve, round, installed_stamp, feeler_go, feeler_no_go, measured FROM readings WHERE check_id = ? ORDER BY valve",
    [checkId],
  );

/** What the server has applied for this check's owner: overwritten readings, and each device's last id. */
async function applied(checkId: string) {
  const db = await rawConnection();
  const history = await historyRows([checkId], db);
  const [c] = await db.query(
    "SELECT s.id, s.last_mutation_id FROM sync_clients s JOIN checks k ON k.owner_id = s.user_id WHERE k.id = ? ORDER BY s.id",
    [checkId],
  );
  await db.end();
  return { history, clients: c as { id: string; last_mutation_id: number }[] };
}

let checkUrl = "";
let checkId = "";

beforeAll(async () => {
  ctx = await open();
});

async function measuredCount(page: Page) {
  return page.getByText(/of 16 valves measured/).innerText();
}

describe("a whole check offline, then sync", () => {
  it("signs in online and keeps the garage screens for offline use", async () => {
    const u = await makeUser("offline");
    const page = ctx.pages()[0] ?? (await ctx.newPage());
    await signInAs(page, u.email, u.password);
    await page.getByText(/No engines on this phone yet/).waitFor();
    // the service worker is installed and controls the page, with the shells precached
    await page.evaluate(async () => {
      await navigator.serviceWorker.ready;
      if (!navigator.serviceWorker.controller)
        await new Promise((r) => navigator.serviceWorker.addEventListener("controllerchange", r, { once: true }));
    });
    const cached = await page.evaluate(async () => {
      const keys = await caches.keys();
      const all = await Promise.all(
        keys.map(async (k) => (await (await caches.open(k)).keys()).map((r) => new URL(r.url).pathname)),
      );
      return all.flat();
    });
    for (const p of ["/engines", "/engine", "/engine/edit", "/check", "/tray"]) expect(cached).toContain(p);
  });

  it("with no network: creates an engine, a check and 16 readings by taps", async () => {
    const page = ctx.pages()[0]!;
    await ctx.setOffline(true);
    await page.getByRole("link", { name: /Add an engine/ }).tap();
    await page.getByLabel("Start from a layout").selectOption("i4-16");
    // the preset says the shims sit under the buckets (common practice); this engine has them over
    await page.getByLabel(/^Shims over the buckets/).check();
    await page.getByLabel("Name").fill("Offline four");
    await page.getByLabel("Intake from (mm)").fill("0.10");
    await page.getByLabel("Intake to (mm)").fill("0.20");
    await page.getByLabel("Exhaust from (mm)").fill("0.20");
    await page.getByLabel("Exhaust to (mm)").fill("0.30");
    await page.getByRole("button", { name: "Save engine" }).tap();
    await page.waitForURL(/\/engine\?id=/);
    await page.getByLabel(/Odometer now/).fill("15200");
    await page.getByRole("button", { name: "Start check" }).tap();
    await page.waitForURL(/\/check\?id=/);
    checkUrl = page.url();
    checkId = new URL(checkUrl).searchParams.get("id")!;
    await page.getByRole("checkbox", { name: /Engine cold/ }).waitFor();
    const boxes = await page.getByRole("checkbox").all();
    expect(boxes).toHaveLength(6);
    for (const box of boxes) {
      await box.tap();
      await expect.poll(() => box.getAttribute("aria-checked")).toBe("true");
    }
    await page.getByRole("button", { name: "Start measuring" }).tap();
    await page.getByLabel("Shim size for every bucket").selectOption("2.6");
    await page.getByRole("button", { name: "Fill all" }).tap();
    await page.getByTestId("shim-I1.1").getByText("2.60").waitFor();
    // the measuring mode shows one valve at a time and moves on after each tap
    for (let i = 0; i < 16; i++) {
      const valve = (await page.locator("article[data-valve]").getAttribute("data-valve"))!;
      await page
        .getByRole("group", { name: `Feeler blades for ${valve}` })
        .getByRole("button", { name: TAPS[valve]!, exact: true })
        .tap();
      await expect.poll(() => measuredCount(page)).toMatch(new RegExp(`^${i + 1} of 16`));
    }
    await page.getByRole("button", { name: /^E2\.1 / }).tap();
    await expect(page.getByTestId("result-E2.1").innerText()).resolves.toMatch(
      /loose · needs 2\.70 mm \(gives 0\.23 mm\)/,
    );
    // offline, the line says there is no signal and how much waits on the phone
    await expect(page.getByTestId("sync-line").innerText()).resolves.toMatch(
      /No signal · saved on this phone, \d+ changes waiting/,
    );
    await page.screenshot({ path: "test-results/check-measure.png", fullPage: false });
    expect(await serverReadings(checkId)).toEqual([]);
  });

  it("still has everything after a reload, and after the browser is closed and opened again, offline", async () => {
    let page = ctx.pages()[0]!;
    await page.reload();
    await expect.poll(() => measuredCount(page)).toMatch(/^16 of 16/);
    await ctx.close();
    ctx = await open();
    await ctx.setOffline(true);
    page = ctx.pages()[0] ?? (await ctx.newPage());
    await page.goto(checkUrl);
    await expect.poll(() => measuredCount(page)).toMatch(/^16 of 16/);
    await page.getByRole("button", { name: /^I2\.2 / }).tap();
    await expect(page.getByTestId("result-I2.2").innerText()).resolves.toMatch(/tight/);
    // each step's code loads when the step is shown: in a browser opened again offline it can only
    // come from the service worker's precache
    const steps = page.getByRole("navigation", { name: "Steps of the check" });
    await steps.getByRole("button", { name: /Plan$/ }).tap();
    await page.getByText("Plan per valve").waitFor();
    await steps.getByRole("button", { name: /Re-check$/ }).tap();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
    await steps.getByRole("button", { name: /Measure$/ }).tap();
    await expect.poll(() => measuredCount(page)).toMatch(/^16 of 16/);
  });

  it("online again: the server holds exactly those readings, once, and nothing waits", async () => {
    const { page, rows } = await syncedOnline(ctx, () => serverReadings(checkId), 16, 20_000);
    for (const r of rows) {
      const go = Number(TAPS[r.valve]);
      expect(Number(r.installed_stamp)).toBe(2.6);
      expect(Number(r.feeler_go)).toBe(go);
      expect(Number(r.measured)).toBe(go);
      expect(Number(r.feeler_no_go)).toBe(BLADES[BLADES.indexOf(go) + 1]);
      expect(r.round).toBe(0);
    }
    // a second sync applies nothing again: no reading is overwritten (an upsert would keep the count
    // but leave the earlier value in reading_history) and the device's last applied id stays put
    const before = await applied(checkId);
    expect(before.history).toBe(0);
    const pulled = page.waitForResponse((r) => r.url().includes("/api/sync/pull"), { timeout: 20_000 });
    await page.evaluate(() => window.dispatchEvent(new Event("online")));
    await pulled;
    await allSynced(page);
    expect(await applied(checkId)).toEqual(before);
    expect(await serverReadings(checkId)).toHaveLength(16);
  });

  it("the plan on screen is the core's plan for the same readings", async () => {
    const page = ctx.pages()[0]!;
    await page.getByRole("button", { name: /see the shim plan/i }).tap();
    await page.getByText("Plan per valve").waitFor();
    const expected = planShims({
      valves: Object.entries(TAPS).map(([id, b]) => ({
        id,
        installed: 2.6,
        measured: Number(b),
        spec: id.startsWith("I") ? { min: 0.1, max: 0.2 } : { min: 0.2, max: 0.3 },
      })),
      sizes: shimSeries(2.5, 3.3, 0.05),
      tray: [],
    });
    for (const a of expected.assignments) {
      const row = await page.getByTestId(`plan-${a.valveId}`).innerText();
      if (a.source.kind === "keep") expect(row).toMatch(/keep/);
      else expect(row).toContain(a.size.toFixed(2));
    }
    const buyText = expected.buy.length ? await page.getByTestId("buy-list").innerText() : "";
    for (const b of expected.buy) expect(buyText).toContain(`${b.count} × ${b.size.toFixed(2)} mm`);
    await page.screenshot({ path: "test-results/check-plan.png", fullPage: true });
  });
});

describe("fitting, re-checking and closing", () => {
  it("ticks the swaps, re-measures only the changed valves, closes the check, and the tray follows", async () => {
    const page = ctx.pages()[0]!;
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    // fitting and re-checking happen in the garage, offline (their code was never loaded in this
    // browser before: it comes from the precache)
    await ctx.setOffline(true);
    await page.getByRole("button", { name: /Fit the 4 changes/ }).tap();
    await page.waitForURL(/step=fit/);
    await page
      .getByRole("heading", { name: /Swap list/ })
      .waitFor({ timeout: 15_000 })
      .catch(async (e: unknown) => {
        await page.screenshot({ path: "test-results/fit-failure.png", fullPage: true });
        throw new Error(`no swap list (${page.url()}; page errors: ${errors.join(" | ") || "none"}): ${String(e)}`);
      });
    const moves = await page.getByRole("checkbox").all();
    expect(moves.length).toBe(4); // one tick per valve: its 2.60 out to the tray and the new one in
    await expect(page.getByRole("checkbox").first().innerText()).resolves.toMatch(
      /Cyl \d (intake|exhaust) \d: take out its 2\.60 and put it on the tray, then fit/,
    );
    for (const m of moves) {
      await m.tap();
      await expect.poll(() => m.getAttribute("aria-checked")).toBe("true");
    }
    await page.getByRole("button", { name: "Re-measure the changed valves" }).tap();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
    const cards = page.getByRole("article");
    await expect(cards.count()).resolves.toBe(4);
    // the new shims give these clearances (gap - new shim); tap them
    const after: Record<string, string> = { "I2.2": "0.13", "E2.1": "0.23", "E3.1": "0.23", "I4.1": "0.13" };
    for (const [valve, blade] of Object.entries(after)) {
      await expect(page.getByTestId(`shim-${valve}`).innerText()).resolves.toBe(
        valve === "I2.2" || valve === "E3.1" ? "2.55" : "2.70",
      );
      await page
        .getByRole("group", { name: `Feeler blades for ${valve}` })
        .getByRole("button", { name: blade, exact: true })
        .tap();
    }
    await page.getByText("✓ Every valve is in its band.").waitFor();
    await page.screenshot({ path: "test-results/check-recheck.png", fullPage: true });
    await page.getByRole("button", { name: "Close the check" }).tap();
    await page.waitForURL(/\/engine\?id=/);
    await page.getByText(/15,200 km/).waitFor();
    await expect(page.getByText(/· closed/).count()).resolves.toBe(1);
    await page.getByRole("link", { name: "Tray" }).tap();
    await page.getByLabel("4 of 2.6 mm").waitFor();
    await backOnline(ctx, page);
    await expect.poll(async () => (await serverReadings(checkId)).length, { timeout: 20_000 }).toBe(20);
  });
});
