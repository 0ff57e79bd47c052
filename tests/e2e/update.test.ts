import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { spawn } from "node:child_process";
import { cpSync, existsSync, mkdtempSync, readFileSync, readdirSync, renameSync, rmSync, writeFileSync } from "node:fs";
import net from "node:net";
import { tmpdir } from "node:os";
import path from "node:path";
import { startNext } from "../../scripts/lib/next-server.mjs";
import { backOnline, persistentPhone } from "../support/browser";
import { queryRows } from "../support/db";
import { bladeReadings, GO } from "../support/club-scenario";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import { syncedOnline } from "../support/online";

/**
 * A deploy as a mechanic meets it (README "At an update"). Build A (npm test's own build)
 * serves a check; build B, a real second build with a visible change (its release label, and
 * source maps so every file has a new name), is deployed over it on the same port: the dist folder
 * swapped, A's hashed files kept beside B's as a real deploy keeps them for a while. The phone
 * fetches the new worker, its HTTP cache is cleared (as phones do under storage pressure), and the
 * garage is offline: every step of the check still opens and takes readings, a reload offline
 * loses nothing, and online every reading reaches the server once. The new build takes over only
 * on the mechanic's tap. A second window opened offline from A's copy keeps working when B takes
 * over under it, its steps' code coming from the worker's copy of the previous build.
 */
const root = path.resolve(__dirname, "../..");
const DEPLOY = ".next-deploy"; // the folder the server runs from
const B = ".next-update-b";
const at = (d: string) => path.join(root, d);
const profile = mkdtempSync(path.join(tmpdir(), "lashwright-update-"));
let ctx: BrowserContext;
let server: ReturnType<typeof startNext> | null = null;
let base = "";
let port = 0;

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once("error", reject);
    s.listen(0, "127.0.0.1", () => {
      const p = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(p));
    });
  });
}

const noCache = (src: string) => !src.split(path.sep).includes("cache");

function run(cmd: string, args: string[], env: Record<string, string>): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: root, env: { ...process.env, ...env }, stdio: ["ignore", "pipe", "pipe"] });
    let out = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (out += d));
    child.once("exit", (code) =>
      code === 0 ? resolve() : reject(new Error(`${cmd} ${args.join(" ")} exited ${code}:\n${out.slice(-3000)}`)),
    );
  });
}

async function serve() {
  server = startNext(port, { NEXTAUTH_URL: base, LASHWRIGHT_DIST_DIR: DEPLOY });
  await server.ready;
}

/** Build B into its own folder. next build rewrites tsconfig.json and next-env.d.ts for its folder: put them back. */
async function buildB() {
  const keep = ["tsconfig.json", "next-env.d.ts"].map(
    (f) => [f, existsSync(at(f)) ? readFileSync(at(f), "utf8") : null] as const,
  );
  try {
    await run(process.execPath, ["node_modules/next/dist/bin/next", "build"], {
      LASHWRIGHT_DIST_DIR: B,
      NEXT_PUBLIC_LASHWRIGHT_RELEASE: "B",
      LASHWRIGHT_SOURCE_MAPS: "1",
      NEXT_TELEMETRY_DISABLED: "1",
    });
  } finally {
    for (const [f, text] of keep)
      if (text === null) rmSync(at(f), { force: true });
      else writeFileSync(at(f), text);
  }
}

/** The deploy: B's folder takes A's place, A's hashed files stay beside B's (never overwriting B's). */
async function deployB() {
  await server!.stop();
  rmSync(at(`${DEPLOY}-a`), { recursive: true, force: true });
  renameSync(at(DEPLOY), at(`${DEPLOY}-a`));
  cpSync(at(B), at(DEPLOY), { recursive: true, filter: noCache });
  cpSync(at(`${DEPLOY}-a/static`), at(`${DEPLOY}/static`), { recursive: true, force: false, errorOnExist: false });
  await serve();
}

const staticFiles = (dir: string) =>
  new Set(
    (readdirSync(at(`${dir}/static/chunks`), { recursive: true }) as string[]).map((f) => f.split(path.sep).join("/")),
  );

beforeAll(async () => {
  port = await freePort();
  base = `http://127.0.0.1:${port}`;
  for (const d of [DEPLOY, `${DEPLOY}-a`, B]) rmSync(at(d), { recursive: true, force: true });
  // build A is npm test's build
  cpSync(at(".next"), at(DEPLOY), { recursive: true, filter: noCache });
  await buildB();
  await serve();
  ctx = await persistentPhone(profile);
}, 15 * 60_000);

afterAll(async () => {
  await ctx?.close();
  await server?.stop();
  rmSync(profile, { recursive: true, force: true });
  for (const d of [DEPLOY, `${DEPLOY}-a`, B]) rmSync(at(d), { recursive: true, force: true });
});

const serverReadings = (checkId: string) =>
  queryRows<{ valve: string; round: number; feeler_go: string }>(
    "SELECT valve, round, feeler_go FROM readings WHERE check_id = ? ORDER BY round, valve",
    [checkId],
  );

// intake band 0.10-0.20, exhaust 0.20-0.30 on 2.60 shims: four valves out of band, as in the club
// scenario but for E3.1 (tight here) and I4.1 (loose here)
const TAPS: Record<string, number> = { ...GO, "E3.1": 0.18, "I4.1": 0.23 };
const LAST = "I4.2"; // tapped by hand, offline, after the deploy

let engineId = "";
let checkId = "";
const aSteps: string[] = [];
const measured = (page: Page) => page.getByText(/of 16 valves measured/).innerText();
const steps = (page: Page) => page.getByRole("navigation", { name: "Steps of the check" });
const clearHttpCache = async (page: Page) => (await ctx.newCDPSession(page)).send("Network.clearBrowserCache");
const waiting = (page: Page) => page.evaluate(async () => !!(await navigator.serviceWorker.getRegistration())?.waiting);

describe("a deploy while a check is open", () => {
  it("build A: a check open on the phone, its worker in control", async () => {
    const u = await makeUser("update");
    const page = ctx.pages()[0] ?? (await ctx.newPage());
    await page.goto(`${base}/sign-in`);
    await page.getByLabel("E-mail").fill(u.email);
    await page.getByLabel("Password").fill(u.password);
    await page.getByRole("button", { name: "Sign in", exact: true }).tap();
    await page.waitForURL("**/engines");
    await page.evaluate(async () => {
      await navigator.serviceWorker.ready;
      if (!navigator.serviceWorker.controller)
        await new Promise((r) => navigator.serviceWorker.addEventListener("controllerchange", r, { once: true }));
    });
    // the engine, the check and 15 readings, as another phone of hers would have sent them
    engineId = crypto.randomUUID();
    checkId = crypto.randomUUID();
    const sent = Object.fromEntries(Object.entries(TAPS).filter(([v]) => v !== LAST));
    const readings = bladeReadings(checkId, sent).map((m, i) => ({ id: i + 3, ...m }));
    const body = {
      clientId: crypto.randomUUID(),
      mutations: [
        { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, name: "Update four", id: engineId } },
        { id: 2, name: "check.put/1", args: { id: checkId, engineId, odometer: 15_200 } },
        ...readings,
      ],
    };
    // sent from the app's own page: the API takes changes only from there
    const pushed = await page.evaluate(
      async (b) =>
        (
          await fetch("/api/sync/push", {
            method: "POST",
            headers: { "content-type": "application/json" },
            body: JSON.stringify(b),
          })
        ).json(),
      body,
    );
    expect(pushed).toEqual({ lastMutationId: 17, rejected: [] });
    // the step files build A loads, to show below that B is a real second build
    page.on("request", (r) => {
      const p = new URL(r.url()).pathname;
      if (p.startsWith("/_next/static/chunks/")) aSteps.push(p.slice("/_next/static/chunks/".length));
    });
    await page.goto(`${base}/check?id=${checkId}&step=measure`);
    await expect.poll(() => measured(page), { timeout: 20_000 }).toMatch(/^15 of 16/);
    await expect(page.getByTestId("release").count()).resolves.toBe(0);
  });

  it("build B deployed: the new worker waits and the phone offers the reload", async () => {
    const page = ctx.pages()[0]!;
    await deployB();
    await page.evaluate(async () => (await navigator.serviceWorker.getRegistration())!.update());
    await expect.poll(() => waiting(page), { timeout: 60_000 }).toBe(true);
    await page.getByText("A new version is ready: reload (your readings are saved)").waitFor({ timeout: 10_000 });
    // no takeover: the page is still build A
    await expect(page.getByTestId("release").count()).resolves.toBe(0);
  });

  it("HTTP cache cleared and offline: Plan, Fit and Re-check open and take readings; a reload offline keeps them", async () => {
    const page = ctx.pages()[0]!;
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    await clearHttpCache(page);
    await ctx.setOffline(true);
    await page.getByRole("button", { name: new RegExp(`^${LAST.replace(".", "\\.")} `) }).tap();
    await page
      .getByRole("group", { name: `Feeler blades for ${LAST}` })
      .getByRole("button", { name: "0.15", exact: true })
      .tap();
    await expect.poll(() => measured(page)).toMatch(/^16 of 16/);
    await steps(page).getByRole("button", { name: /Plan$/ }).tap();
    await page.getByText("Plan per valve").waitFor();
    await page.getByRole("button", { name: /Fit the \d+ changes/ }).tap();
    await page.getByRole("heading", { name: /Swap list/ }).waitFor({ timeout: 15_000 });
    for (const m of await page.getByRole("checkbox").all()) {
      await m.tap();
      await expect.poll(() => m.getAttribute("aria-checked")).toBe("true");
    }
    await page.getByRole("button", { name: "Re-measure the changed valves" }).tap();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
    const after: Record<string, string> = { "I2.2": "0.13", "E2.1": "0.23", "E3.1": "0.23", "I4.1": "0.13" };
    for (const [valve, blade] of Object.entries(after))
      await page
        .getByRole("group", { name: `Feeler blades for ${valve}` })
        .getByRole("button", { name: blade, exact: true })
        .tap();
    await page.getByText("✓ Every valve is in its band.").waitFor();
    expect(errors).toEqual([]);
    await expect(page.getByTestId("load-failed").count()).resolves.toBe(0);

    await page.reload();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor({ timeout: 20_000 });
    await page.getByText("✓ Every valve is in its band.").waitFor();
    await expect(page.getByTestId("release").count()).resolves.toBe(0);
    await steps(page)
      .getByRole("button", { name: /Measure$/ })
      .tap();
    await expect.poll(() => measured(page)).toMatch(/^16 of 16/);
  });

  it("online again: every reading reaches the server once", async () => {
    const { rows } = await syncedOnline(ctx, () => serverReadings(checkId), 20, 30_000);
    expect(
      rows
        .filter((r) => r.round === 0)
        .map((r) => r.valve)
        .sort(),
    ).toEqual(Object.keys(TAPS).sort());
    expect(rows.filter((r) => r.round === 1).map((r) => [r.valve, Number(r.feeler_go)])).toEqual([
      ["E2.1", 0.23],
      ["E3.1", 0.23],
      ["I2.2", 0.13],
      ["I4.1", 0.13],
    ]);
  });

  // Its own bound: two windows, a takeover, three steps offline and a sync, each wait bounded below.
  it(
    "a second window opened offline from A's copy keeps working when B takes over under it",
    { timeout: 240_000 },
    async () => {
      const first = ctx.pages()[0]!;
      await ctx.setOffline(true);
      const second = await ctx.newPage();
      await second.goto(`${base}/engine?id=${engineId}`);
      await second
        .getByText(/15,200 km/)
        .first()
        .waitFor({ timeout: 20_000 });
      await expect(second.getByTestId("release").count()).resolves.toBe(0);
      // the mechanic taps the reload in the first window: B takes over, that window reloads into B
      await ctx.setOffline(false);
      await first.getByRole("button", { name: "Reload" }).tap();
      await first.getByTestId("release").getByText("Release B").waitFor({ timeout: 30_000 });
      await expect.poll(() => measured(first), { timeout: 20_000 }).toMatch(/^16 of 16/);
      // the second window still runs A, now under B's worker, and is told a new version is ready
      await second.getByText("A new version is ready: reload (your readings are saved)").waitFor({ timeout: 10_000 });
      await expect(second.getByTestId("release").count()).resolves.toBe(0);
      // no HTTP cache and no signal: A's code for the check and its steps comes from the worker's copy
      await clearHttpCache(second);
      await ctx.setOffline(true);
      const errors: string[] = [];
      second.on("pageerror", (e) => errors.push(e.message));
      await second
        .getByRole("link", { name: /15,200 km/ })
        .first()
        .tap();
      await second.waitForURL(/\/check\?id=/);
      await steps(second).getByRole("button", { name: /Plan$/ }).tap();
      await second.getByText("Plan per valve").waitFor({ timeout: 15_000 });
      await steps(second).getByRole("button", { name: /Fit$/ }).tap();
      await second.getByRole("heading", { name: /Swap list/ }).waitFor({ timeout: 15_000 });
      await steps(second)
        .getByRole("button", { name: /Re-check$/ })
        .tap();
      await second.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor({ timeout: 15_000 });
      // a reading taken again in this window reaches the server once it is online
      await second
        .getByRole("group", { name: "Feeler blades for I2.2" })
        .getByRole("button", { name: "0.15", exact: true })
        .tap();
      expect(errors).toEqual([]);
      await expect(second.getByTestId("load-failed").count()).resolves.toBe(0);
      await backOnline(ctx, second);
      await expect
        .poll(
          async () =>
            Number((await serverReadings(checkId)).find((r) => r.valve === "I2.2" && r.round === 1)?.feeler_go),
          { timeout: 30_000 },
        )
        .toBe(0.15);
      expect(await serverReadings(checkId)).toHaveLength(20);
      // and the reload there brings B
      await second.getByRole("button", { name: "Reload" }).tap();
      await second.getByTestId("release").getByText("Release B").waitFor({ timeout: 30_000 });
    },
  );
});

describe("the deploy itself", () => {
  it("B is a real second build: files A's check loaded are not among B's own, and the server still has them for A", () => {
    const bFiles = staticFiles(DEPLOY);
    const onlyA = aSteps.filter((f) => !staticFiles(B).has(f));
    expect(onlyA.length).toBeGreaterThan(0);
    for (const f of onlyA) expect(bFiles.has(f)).toBe(true);
  });
});

describe("a newer build's database upgrade in another window", () => {
  it("the older window is told to reload, not left failing to save", async () => {
    const page = ctx.pages()[0]!;
    const other = await ctx.newPage();
    await other.goto(`${base}/offline`);
    // what a later build's first open does: a higher version of the same database
    await other.evaluate(async () => {
      const user = JSON.parse(localStorage.getItem("lashwright.user") ?? "null") as { id: string };
      await new Promise<void>((resolve, reject) => {
        const req = indexedDB.open(`lashwright-${user.id}`, 1000);
        req.onsuccess = () => (req.result.close(), resolve());
        req.onerror = () => reject(req.error);
      });
    });
    await page
      .getByTestId("db-notice")
      .getByText(/needs this one to reload \(your readings are saved\)/)
      .waitFor({ timeout: 10_000 });
    await other.close();
  });
});
