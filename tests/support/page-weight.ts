import type { Browser } from "playwright-core";
import { PHONE } from "./browser";

/**
 * Compressed bytes of JavaScript a first visit loads (from the browser's network log): a new phone,
 * nothing cached, every script the page asks for until the network is quiet, lazy ones included.
 * One measure for `npm run bench` (bench/browser.mts) and the size budget (tests/e2e/page-weight).
 */
export async function firstVisitJs(browser: Browser, url: string) {
  const ctx = await browser.newContext({ ...PHONE });
  const page = await ctx.newPage();
  const sizes: Promise<number>[] = [];
  const urls: string[] = [];
  page.on("requestfinished", (req) => {
    if (req.resourceType() === "script") {
      sizes.push(req.sizes().then((s) => s.responseBodySize));
      urls.push(req.url());
    }
  });
  await page.goto(url, { waitUntil: "networkidle" });
  const each = await Promise.all(sizes);
  const total = each.reduce((a, b) => a + b, 0);
  const files = sizes.length;
  await ctx.close();
  return { bytes: total, files, scripts: urls.map((u, i) => ({ url: u, bytes: each[i]! })) };
}

/** The pages whose first visit is measured, by name (ids are random: the shells read them on the client). */
export const WEIGHED_PAGES = {
  home: "/",
  "sign-in": "/sign-in",
  "sign-up": "/sign-up",
  check: "/check?id=00000000-0000-4000-8000-000000000000",
  review: "/review?id=00000000-0000-4000-8000-000000000000",
} as const;
