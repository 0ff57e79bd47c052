import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { baseUrl, launch } from "../support/browser";
import { firstVisitJs, WEIGHED_PAGES } from "../support/page-weight";

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

let browser: Browser;
beforeAll(async () => {
  browser = await launch();
});
afterAll(() => browser?.close());

describe("the first-visit JavaScript of each page stays within its budget", () => {
  const goal = Math.round(budget.bareBytes * budget.goalRatio);
  for (const [name, page] of Object.entries(WEIGHED_PAGES) as [keyof typeof WEIGHED_PAGES, string][]) {
    it(`${name} (${page})`, async () => {
      const w = await firstVisitJs(browser, `${baseUrl()}${page}`);
      const allowed = budget.pages[name];
      console.log(`[page-weight] ${name}: ${kib(w.bytes)} in ${w.files} files; budget ${kib(allowed)}; goal ${kib(goal)}`);
      if (w.bytes > allowed) for (const s of [...w.scripts].sort((a, b) => b.bytes - a.bytes).slice(0, 8)) console.log(`[page-weight]   ${kib(s.bytes)} ${new URL(s.url).pathname}`);
      expect(w.bytes, `${name} loads ${kib(w.bytes)} of JavaScript on a first visit, over its budget of ${kib(allowed)}`).toBeLessThanOrEqual(allowed);
      // once the goal is met, the budget is the goal
      if (w.bytes <= goal) expect(allowed, `${name} meets the goal: set its budget to ${goal} bytes`).toBeLessThanOrEqual(goal);
      // a budget far above the page's weight would let it grow back unseen
      else expect(allowed, `${name} now weighs ${w.bytes} bytes: lower its budget to that`).toBeLessThanOrEqual(Math.ceil(w.bytes * (1 + RATCHET)));
    });
  }
});
