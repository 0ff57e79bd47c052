// `npm run bench:lighthouse [rounds] [--before DIST] [--shots DIR]`: Lighthouse alone (mobile, the
// same runs as `npm run bench`) on the home, sign-in, review and check pages beside a bare Next page
// built now, a few rounds with the pages taken in turn, so that each round's bare page shares the
// machine's load with the pages it is compared to. Prints each run's score and metrics, and what
// Lighthouse names as the cause; the full reports go to bench/results/lighthouse/ for reading
// further. --before serves a second build (made with LASHWRIGHT_DIST_DIR=DIST) in the same rounds;
// --shots saves the pages at 360 px, light and dark, from each build.
import { mkdirSync, writeFileSync } from "node:fs";
import { parseArgs } from "node:util";
import { chromium } from "playwright-core";
import { auditOnce, launchAuditChrome, startBarePage } from "./browser.mts";
import { startBenchServer, type BenchServer } from "./server.mts";
import { say, stage } from "./progress.mts";
import { CHROMIUM_ARGS } from "../tests/support/browser";

const { values, positionals } = parseArgs({
  allowPositionals: true,
  options: { before: { type: "string" }, shots: { type: "string" } },
});
const rounds = Number(positionals[0] ?? 3);
const OUT = "bench/results/lighthouse";
mkdirSync(OUT, { recursive: true });

type Item = Record<string, unknown>;
type Audit = { numericValue?: number; displayValue?: string; details?: { items?: Item[] } };
const items = (a: Audit | undefined) => a?.details?.items ?? [];
const ms = (a: Audit | undefined) => Math.round(a?.numericValue ?? NaN);
const PATHS = {
  home: "/",
  "sign-in": "/sign-in",
  review: `/review?id=${crypto.randomUUID()}`,
  check: `/check?id=${crypto.randomUUID()}`,
};

const servers: [string, BenchServer][] = [];
if (values.before) {
  const distDir = values.before;
  servers.push(["before ", await stage(`starting the build in ${distDir}`, () => startBenchServer({ distDir }))]);
}
servers.push(["", await stage("starting the production server and a throwaway database", () => startBenchServer())]);
const bare = await stage("building and starting the bare Next page", startBarePage);
const chrome = await launchAuditChrome();
const scores: Record<string, number[]> = {};
try {
  const pages: Record<string, string> = { bare: bare.url };
  for (const [tag, srv] of servers)
    for (const [name, path] of Object.entries(PATHS)) pages[`${tag}${name}`] = `${srv.url}${path}`;
  if (values.shots) await screenshots(pages, values.shots);
  for (let round = 1; round <= rounds; round++) {
    for (const [name, url] of Object.entries(pages)) {
      say(`round ${round}: ${name}`);
      const lhr = await auditOnce(name, url, chrome.port);
      writeFileSync(`${OUT}/${name.replace(" ", "-")}-${round}.json`, JSON.stringify(lhr));
      const a = lhr.audits as Record<string, Audit>;
      const perf = Math.round((lhr.categories.performance?.score ?? 0) * 100);
      (scores[name] ??= []).push(perf);
      const m = {
        FCP: ms(a["first-contentful-paint"]),
        LCP: ms(a["largest-contentful-paint"]),
        TBT: ms(a["total-blocking-time"]),
        CLS: a["cumulative-layout-shift"]?.numericValue?.toFixed(3),
        SI: ms(a["speed-index"]),
      };
      console.log(
        `${name} r${round}: perf ${perf}  ${Object.entries(m)
          .map(([k, v]) => `${k} ${v}`)
          .join("  ")}`,
      );
      const lcp = items(a["lcp-breakdown-insight"] ?? a["largest-contentful-paint-element"]);
      for (const i of lcp) console.log(`    lcp: ${JSON.stringify(i).slice(0, 400)}`);
      for (const i of items(a["render-blocking-resources"]))
        console.log(`    render-blocking: ${i.url} ${i.totalBytes} B, ${i.wastedMs} ms`);
      for (const i of items(a["bootup-time"]).slice(0, 4))
        console.log(
          `    bootup: ${i.url} total ${Math.round(i.total as number)} ms, script ${Math.round(i.scripting as number)} ms`,
        );
      for (const i of items(a["long-tasks"]).slice(0, 5))
        console.log(
          `    long task: ${i.url} at ${Math.round(i.startTime as number)} for ${Math.round(i.duration as number)} ms`,
        );
      for (const i of items(a["layout-shifts"] ?? a["layout-shift-elements"]).slice(0, 3))
        console.log(`    shift: ${JSON.stringify(i).slice(0, 300)}`);
      for (const id of ["unused-javascript", "unused-css-rules", "font-display", "mainthread-work-breakdown"])
        if (a[id]?.displayValue) console.log(`    ${id}: ${a[id]!.displayValue}`);
    }
  }
} finally {
  chrome.kill();
  await bare.stop();
  for (const [, srv] of servers) await srv.stop();
}
for (const [name, s] of Object.entries(scores)) {
  const gaps = name === "bare" ? "" : `  gap to bare per round: ${s.map((x, i) => scores.bare![i]! - x).join(", ")}`;
  console.log(`${name.padEnd(15)} ${s.join(", ")}${gaps}`);
}

/** Each page at 360 px, light and dark, once its first answers are in: to look at before and after. */
async function screenshots(pages: Record<string, string>, dir: string) {
  mkdirSync(dir, { recursive: true });
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: CHROMIUM_ARGS,
  });
  try {
    for (const colorScheme of ["light", "dark"] as const) {
      const ctx = await browser.newContext({
        viewport: { width: 360, height: 780 },
        isMobile: true,
        hasTouch: true,
        colorScheme,
      });
      const page = await ctx.newPage();
      for (const [name, url] of Object.entries(pages)) {
        await page.goto(url, { waitUntil: "networkidle" });
        await page.screenshot({ path: `${dir}/${name.replace(" ", "-")}-${colorScheme}.png`, fullPage: true });
      }
      await ctx.close();
    }
  } finally {
    await browser.close();
  }
}
