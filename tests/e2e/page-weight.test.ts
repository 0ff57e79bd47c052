import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { baseUrl, PHONE, signInAs } from "../support/browser";
import { makeUser } from "../support/fixtures";
import { firstVisitJs, WEIGHED_PAGES } from "../support/page-weight";
import { browserPerFile } from "../support/per-file";

/**
 * The size budget: compressed JavaScript of a first visit to each page, measured as `npm run bench`
 * does (tests/support/page-weight.ts), against tests/e2e/page-weight-budget.json. Bytes of one build
 * are the same on every run, so this is a check, not a timing. A page's budget is the goal (1.3x a
 * bare Next page of the same version, measured by the bench) once the page meets it, and the
 * page's weight on the day the budget was set until then. It only goes down: a budget more than
 * RATCHET above what the page now weighs must be lowered to it in the same change.
 */
interface Budget {
  /** the bare Next page's first visit, bytes (npm run bench, "bare Next page") */
  bareBytes: number;
  goalRatio: number;
  pages: Record<keyof typeof WEIGHED_PAGES, number>;
}
const budget = JSON.parse(readFileSync(path.join(import.meta.dirname, "page-weight-budget.json"), "utf8")) as Budget;
const RATCHET = 0.05;
const kib = (n: number) => `${(n / 1024).toFixed(1)} KiB`;

const browser = browserPerFile();

describe("the first-visit JavaScript of each page stays within its budget", () => {
  const goal = Math.round(budget.bareBytes * budget.goalRatio);
  for (const [name, page] of Object.entries(WEIGHED_PAGES) as [keyof typeof WEIGHED_PAGES, string][]) {
    it(`${name} (${page})`, async () => {
      const w = await firstVisitJs(browser, `${baseUrl()}${page}`);
      const allowed = budget.pages[name];
      console.log(
        `[page-weight] ${name}: ${kib(w.bytes)} in ${w.files} files; budget ${kib(allowed)}; goal ${kib(goal)}`,
      );
      if (w.bytes > allowed)
        for (const s of [...w.scripts].sort((a, b) => b.bytes - a.bytes).slice(0, 8))
          console.log(`[page-weight]   ${kib(s.bytes)} ${new URL(s.url).pathname}`);
      expect(
        w.bytes,
        `${name} loads ${kib(w.bytes)} of JavaScript on a first visit, over its budget of ${kib(allowed)}`,
      ).toBeLessThanOrEqual(allowed);
      // once the goal is met, the budget is the goal
      if (w.bytes <= goal)
        expect(allowed, `${name} meets the goal: set its budget to ${goal} bytes`).toBeLessThanOrEqual(goal);
      // a budget far above the page's weight would let it grow back unseen
      else
        expect(allowed, `${name} now weighs ${w.bytes} bytes: lower its budget to that`).toBeLessThanOrEqual(
          Math.ceil(w.bytes * (1 + RATCHET)),
        );
    });
  }
});

/** Words only the local database (Dexie) and the sync client carry in the built scripts. */
const DEXIE = "DatabaseClosedError";
const SYNC_CLIENT = "/api/sync/pull";

/** The text of every script a page loads, nothing cached and no service worker. */
async function scriptsOf(
  storageState: Awaited<ReturnType<import("playwright-core").BrowserContext["storageState"]>> | undefined,
  path: string,
  ready: string,
) {
  const ctx = await browser.newContext({ ...PHONE, serviceWorkers: "block", storageState });
  const page = await ctx.newPage();
  const urls: string[] = [];
  page.on("requestfinished", (r) => void (r.resourceType() === "script" && urls.push(r.url())));
  await page.goto(`${baseUrl()}${path}`, { waitUntil: "networkidle" });
  await page.getByText(ready, { exact: false }).first().waitFor();
  // a page with the phone's records has opened its database by now (so its scripts have all come)
  if (storageState && !path.startsWith("/review"))
    await page.waitForFunction(async () =>
      (await indexedDB.databases()).some((d) => d.name?.startsWith("lashwright-")),
    );
  await page.waitForLoadState("networkidle");
  const texts = await Promise.all(urls.map((u) => fetch(u).then((r) => r.text())));
  await ctx.close();
  return texts.join("\n");
}

describe("pages that only read load neither the local database nor the sync client", () => {
  it("home, sign-in and sign-up for a visitor; a review opened with a signal by a signed-in member; the check page does load them", async () => {
    for (const [path, ready] of [
      ["/", "How a check runs"],
      ["/sign-in", "Password"],
      ["/sign-up", "Password"],
    ] as const) {
      const js = await scriptsOf(undefined, path, ready);
      expect(js.includes(DEXIE), `${path} loads Dexie`).toBe(false);
      expect(js.includes(SYNC_CLIENT), `${path} loads the sync client`).toBe(false);
    }
    const u = await makeUser("weight");
    const ctx = await browser.newContext({ ...PHONE });
    const page = await ctx.newPage();
    await signInAs(page, u.email, u.password);
    const signedIn = await ctx.storageState();
    await ctx.close();
    // a check nobody shared with this member: the review answers that it cannot be read
    const review = await scriptsOf(signedIn, `/review?id=${crypto.randomUUID()}`, "Open the check once with a signal");
    expect(review.includes(DEXIE), "the review loads Dexie").toBe(false);
    expect(review.includes(SYNC_CLIENT), "the review loads the sync client").toBe(false);
    // the same member's check page needs the phone's records: both come in (and the words above are theirs)
    const check = await scriptsOf(signedIn, `/check?id=${crypto.randomUUID()}`, "Valve check");
    expect(check.includes(DEXIE)).toBe(true);
    expect(check.includes(SYNC_CLIENT)).toBe(true);
  });
});
