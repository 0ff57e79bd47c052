// The browser figures: offline entry latency on the check screen beside a bare Dexie write in the
// same page, compressed JavaScript of a first visit beside a bare Next page built in this run, and
// Lighthouse (mobile) beside the same bare page. playwright-core and Lighthouse both drive Debian's
// Chromium.
import { spawn } from "node:child_process";
import { mkdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { chromium, type Browser, type Page } from "playwright-core";
import * as chromeLauncher from "chrome-launcher";
import lighthouse from "lighthouse";
// @ts-expect-error plain JS set-up module shared with npm start and npm test
import { freePort, root, spawnChild, stopChild } from "../scripts/lib/setup.mjs";
import { CHROMIUM_ARGS, PHONE } from "../tests/support/browser";
import { firstVisitJs, WEIGHED_PAGES } from "../tests/support/page-weight";
import { Client } from "../tests/support/api";
import { ENGINE_FOUR } from "../tests/support/fixtures";
import { waitForPage, type BenchServer } from "./server.mts";
import { say } from "./progress.mts";

const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * s.length))]!;
};
const stats = (xs: number[]) => ({ median: quantile(xs, 0.5), p95: quantile(xs, 0.95) });

/** A Next app with no app code, same Next version, built and served in this run: the yardstick. */
export async function startBarePage() {
  const dir = path.join(root, ".data", "bench-bare");
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(path.join(dir, "app"), { recursive: true });
  writeFileSync(path.join(dir, "package.json"), JSON.stringify({ name: "bare-page", private: true }));
  writeFileSync(
    path.join(dir, "next.config.mjs"),
    `export default { turbopack: { root: ${JSON.stringify(root)} } };\n`,
  );
  writeFileSync(
    path.join(dir, "app", "layout.jsx"),
    `export const metadata = { title: "Bare page", description: "A page with no app code" };\nexport default function RootLayout({ children }) {\n  return (<html lang="en"><body>{children}</body></html>);\n}\n`,
  );
  writeFileSync(
    path.join(dir, "app", "page.jsx"),
    `export default function Page() {\n  return (<main><h1>Bare page</h1><p>No app code: the yardstick for page weight and audits.</p></main>);\n}\n`,
  );
  const next = path.join(root, "node_modules/next/dist/bin/next");
  await new Promise<void>((resolve, reject) => {
    const b = spawn(process.execPath, [next, "build"], {
      cwd: dir,
      env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" },
      stdio: "ignore",
    });
    b.on("exit", (code) => (code === 0 ? resolve() : reject(new Error(`bare page build failed (${code})`))));
  });
  const port = await freePort();
  const server = spawnChild(process.execPath, [next, "start", "-H", "127.0.0.1", "-p", String(port)], {
    cwd: dir,
    env: { ...process.env, NODE_ENV: "production", NEXT_TELEMETRY_DISABLED: "1" },
    stdio: "ignore",
  });
  const url = `http://127.0.0.1:${port}`;
  await waitForPage(url);
  return {
    url,
    stop: async () => {
      await stopChild(server, { graceMs: 4000 });
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

export async function signedInPage(browser: Browser, url: string, u: { email: string; password: string }) {
  const ctx = await browser.newContext({ ...PHONE, colorScheme: "dark" });
  // tsx keeps function names with a helper the page does not have; functions sent to the page need it
  await ctx.addInitScript({ content: "globalThis.__name = (f) => f;" });
  const page = await ctx.newPage();
  await page.goto(`${url}/sign-in`);
  await page.getByLabel("E-mail").fill(u.email);
  await page.getByLabel("Password").fill(u.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).tap();
  await page.waitForURL("**/engines");
  return { ctx, page };
}

/**
 * 100 taps, in the page: from the click on the current valve's blade to its reading stored
 * (IndexedDB) and the screen showing the result (the measuring mode then shows the next valve).
 */
export function tapLoop(page: Page, taps: number) {
  return page.evaluate(
    async ({ taps }) => {
      const out: number[] = [];
      const after = (name: string, t0: number, valve?: string) =>
        performance
          .getEntriesByName(name)
          .some((e) => (valve === undefined || (e as PerformanceMark).detail === valve) && e.startTime >= t0);
      for (let i = 0; i < taps; i++) {
        const valve = document.querySelector("article[data-valve]")!.getAttribute("data-valve")!;
        const group = document.querySelector(`[role="group"][aria-label="Feeler blades for ${valve}"]`)!;
        const buttons = group.querySelectorAll("button");
        // the blade that is not pressed now, so every tap changes the reading
        const button = (
          buttons[9]!.getAttribute("aria-pressed") === "true" ? buttons[8] : buttons[9]
        ) as HTMLButtonElement;
        performance.clearMarks();
        const t0 = performance.now();
        button.click();
        while (!(after("lw:stored", t0, valve) && after("lw:shown", t0))) {
          if (performance.now() - t0 > 5000) throw new Error(`tap ${i} on ${valve}: not stored and shown within 5 s`);
          await new Promise((r) => setTimeout(r, 0));
        }
        const end = Math.max(
          ...performance
            .getEntriesByName("lw:stored")
            .concat(performance.getEntriesByName("lw:shown"))
            .map((e) => e.startTime),
        );
        out.push(end - t0);
      }
      return out;
    },
    { taps },
  );
}

/** The same reading and outbox entry written by Dexie alone, in the same page. */
async function bareDexie(page: Page, n: number) {
  await page.addScriptTag({ content: readFileSync(path.join(root, "node_modules/dexie/dist/dexie.min.js"), "utf8") });
  return page.evaluate(async (n) => {
    const D = (
      window as unknown as {
        Dexie: new (name: string) => {
          version(n: number): { stores(s: Record<string, string>): void };
          open(): Promise<void>;
          transaction(mode: string, t: unknown[], fn: () => Promise<void>): Promise<void>;
          table(n: string): { put(v: unknown): Promise<unknown>; add(v: unknown): Promise<unknown> };
        };
      }
    ).Dexie;
    const db = new D(`bench-bare-${Math.random()}`);
    db.version(1).stores({ readings: "[checkId+valve+round], checkId", outbox: "++seq, &mutationId" });
    await db.open();
    const out: number[] = [];
    for (let i = 0; i < n; i++) {
      const t0 = performance.now();
      const reading = {
        checkId: "c",
        valve: `I${(i % 4) + 1}.1`,
        round: 0,
        installedStamp: 2.6,
        feelerGo: 0.15,
        feelerNoGo: 0.18,
        measured: 0.15,
        method: "feeler",
        installedMicrometer: null,
        fittedShim: null,
      };
      await db.transaction("rw", [db.table("readings"), db.table("outbox")], async () => {
        await db.table("readings").put(reading);
        await db
          .table("outbox")
          .add({ mutationId: i + 1, name: "reading.put/1", args: { checkId: "c", reading }, createdAt: Date.now() });
      });
      out.push(performance.now() - t0);
    }
    return out;
  }, n);
}

/** A new user's four-cylinder check open on the measure step, offline: where the taps are timed. */
export async function measuringPage(browser: Browser, srv: BenchServer, tag: string) {
  const u = await srv.makeUser(tag);
  const api = new Client(srv.url);
  await api.signIn("password", { email: u.email, password: u.password });
  const engineId = (await api.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await api.post(`/api/engines/${engineId}/checks`, { odometer: 100 })).json.check.id as string;
  const { ctx, page } = await signedInPage(browser, srv.url, u);
  await page.goto(`${srv.url}/check?id=${checkId}&step=measure`);
  await page.locator("article[data-valve]").waitFor();
  await ctx.setOffline(true);
  return { ctx, page };
}

export async function runEntryBench(srv: BenchServer, taps = 100) {
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  try {
    const { ctx, page } = await measuringPage(browser, srv, "entry");
    const cdp = await ctx.newCDPSession(page);
    const result: Record<string, { median: number; p95: number }> = {};
    for (const rate of [1, 4]) {
      await cdp.send("Emulation.setCPUThrottlingRate", { rate });
      await tapLoop(page, 16); // warm up: first renders, JIT
      say(`  ${taps} taps on the check page${rate > 1 ? `, CPU slowed ${rate}x` : ""}`);
      result[`app x${rate}`] = stats(await tapLoop(page, taps));
      say(`  ${taps} bare Dexie writes${rate > 1 ? `, CPU slowed ${rate}x` : ""}`);
      result[`bare x${rate}`] = stats(await bareDexie(page, taps));
    }
    await ctx.close();
    return { taps, lat: result };
  } finally {
    await browser.close();
  }
}

/**
 * What a signed-in mechanic's phone loads opening a check on the measure step with nothing cached
 * (no HTTP cache, no service worker): the weight of the step the taps happen on.
 */
async function signedInColdJs(browser: Browser, srv: BenchServer) {
  const u = await srv.makeUser("weight");
  const api = new Client(srv.url);
  await api.signIn("password", { email: u.email, password: u.password });
  const engineId = (await api.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await api.post(`/api/engines/${engineId}/checks`, { odometer: 100 })).json.check.id as string;
  const ctx = await browser.newContext({ ...PHONE, serviceWorkers: "block" });
  await ctx.addInitScript({ content: "globalThis.__name = (f) => f;" });
  const page = await ctx.newPage();
  await page.goto(`${srv.url}/sign-in`);
  await page.getByLabel("E-mail").fill(u.email);
  await page.getByLabel("Password").fill(u.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).tap();
  await page.waitForURL("**/engines");
  // the engine and check are on the phone now; the scripts the sign-in loaded are forgotten
  await page.getByText(ENGINE_FOUR.name).first().waitFor();
  const cdp = await ctx.newCDPSession(page);
  await cdp.send("Network.clearBrowserCache");
  const sizes: Promise<number>[] = [];
  page.on("requestfinished", (req) => {
    if (req.resourceType() === "script") sizes.push(req.sizes().then((s) => s.responseBodySize));
  });
  await page.goto(`${srv.url}/check?id=${checkId}&step=measure`, { waitUntil: "networkidle" });
  await page.locator("article[data-valve]").waitFor();
  await page.waitForLoadState("networkidle");
  const bytes = (await Promise.all(sizes)).reduce((a, b) => a + b, 0);
  const files = sizes.length;
  await ctx.close();
  return { bytes, files };
}

export async function runWeightAndAudits(srv: BenchServer) {
  say("  building and starting the bare Next page");
  const bare = await startBarePage();
  say("  JavaScript of a first visit: check page, home, bare page");
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  try {
    const pages = {} as Record<keyof typeof WEIGHED_PAGES, { bytes: number; files: number }>;
    for (const [name, path] of Object.entries(WEIGHED_PAGES) as [keyof typeof WEIGHED_PAGES, string][]) {
      const { bytes, files } = await firstVisitJs(browser, `${srv.url}${path}`);
      pages[name] = { bytes, files };
    }
    const { check, home } = pages;
    const { bytes: bareBytes, files: bareFiles } = await firstVisitJs(browser, bare.url);
    const barePage = { bytes: bareBytes, files: bareFiles };
    say("  JavaScript of a signed-in visit to the measure step, nothing cached");
    const measure = await signedInColdJs(browser, srv);
    await browser.close();
    const audits = await runLighthouse({
      home: `${srv.url}/`,
      "sign-in": `${srv.url}/sign-in`,
      review: `${srv.url}/review?id=${crypto.randomUUID()}`,
      check: `${srv.url}/check?id=${crypto.randomUUID()}`,
      bare: bare.url,
    });
    return {
      weight: {
        pages,
        check,
        home,
        bare: barePage,
        ratio: check.bytes / barePage.bytes,
        measure,
        measureRatio: measure.bytes / barePage.bytes,
      },
      audits,
    };
  } finally {
    await browser.close().catch(() => undefined);
    await bare.stop();
  }
}

type Scores = { performance: number; accessibility: number; "best-practices": number };

/** Chromium as Lighthouse drives it, headless, with this machine's flags. */
export function launchAuditChrome() {
  return chromeLauncher.launch({ chromePath: CHROMIUM, chromeFlags: ["--headless=new", ...CHROMIUM_ARGS] });
}

/**
 * One Lighthouse run, mobile emulation with the default simulated throttling, as Lighthouse runs by
 * default; a run that failed to load the page (this shared machine stalls now and then) is tried
 * once more.
 */
export async function auditOnce(name: string, url: string, port: number) {
  const run = () =>
    lighthouse(url, {
      port,
      output: "json",
      logLevel: "error",
      onlyCategories: ["performance", "accessibility", "best-practices"],
    });
  let r = await run();
  if (r?.lhr.runtimeError || r?.lhr.categories.performance?.score == null) {
    console.log(`[lighthouse] ${name}: run failed (${r?.lhr.runtimeError?.code ?? "no score"}), trying again`);
    r = await run();
  }
  return r!.lhr;
}

async function runLighthouse(pages: Record<string, string>): Promise<Record<string, Scores>> {
  const chrome = await launchAuditChrome();
  try {
    const out: Record<string, Scores> = {};
    for (const [name, url] of Object.entries(pages)) {
      say(`  Lighthouse, mobile: ${name} page`);
      const lhr = await auditOnce(name, url, chrome.port);
      const c = lhr.categories;
      out[name] = {
        performance: Math.round((c.performance?.score ?? 0) * 100),
        accessibility: Math.round((c.accessibility?.score ?? 0) * 100),
        "best-practices": Math.round((c["best-practices"]?.score ?? 0) * 100),
      };
      for (const a of Object.values(lhr.audits).filter(
        (a) => a.score !== null && a.score < 1 && a.scoreDisplayMode === "binary",
      )) {
        const items = ((a.details as { items?: Record<string, unknown>[] } | undefined)?.items ?? []).map((i) =>
          JSON.stringify(i).slice(0, 300),
        );
        console.log(`[lighthouse] ${name}: ${a.id} not passed${items.length ? `: ${items.join(" | ")}` : ""}`);
      }
    }
    return out;
  } finally {
    chrome.kill();
  }
}
