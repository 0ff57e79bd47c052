import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { AxeBuilder } from "@axe-core/playwright";
import { signedInClient } from "../support/api";
import { baseUrl, launch, phoneContext, signInAs } from "../support/browser";
import { demoMentorClubId, rawConnection } from "../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../support/fixtures";
import { pushAccepted } from "../support/push";

/**
 * axe-core on every screen and every step of a check, as a mechanic and as a mentor, in light and
 * dark at 390 px and in light at 360 px; and again at 320 px (WCAG 1.4.10 Reflow) in light and dark
 * with long names everywhere (engine, club, member, one long unbroken word), where no screen may
 * be wider than the phone. Any violation fails, with its rule, impact and elements.
 *
 * WCAG 2.2 levels A and AA (the tags wcag2a, wcag2aa, wcag21a, wcag21aa, wcag22aa: 2.5.8 Target
 * Size (Minimum) among them) plus axe's best practice.
 * Among the success criteria the rules test: 1.1.1 Non-text Content, 1.3.1 Info and Relationships,
 * 1.4.3 Contrast (Minimum), 1.4.4 Resize Text, 1.4.12 Text Spacing, 2.1.1 Keyboard (scrollable
 * regions reachable), 2.4.1 Bypass Blocks, 2.4.2 Page Titled, 2.4.4 Link Purpose, 3.1.1 Language of
 * Page, 3.3.2 Labels or Instructions, 4.1.1 Parsing (duplicate ids), 4.1.2 Name, Role, Value. The
 * rule for 2.5.3 Label in Name (label-content-name-mismatch) is one axe ships as experimental and
 * runs only when asked: it is asked for here, since the valve cells' names must carry their
 * visible text. No rule is turned off.
 */
const TAGS = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "wcag22aa", "best-practice"];
const ALSO = { "label-content-name-mismatch": { enabled: true } };

const VARIANTS = [
  { name: "light 390", scheme: "light", width: 390 },
  { name: "dark 390", scheme: "dark", width: 390 },
  { name: "light 360", scheme: "light", width: 360 },
] as const;

const incomplete = new Map<string, { n: number; examples: Set<string> }>();

interface Found {
  variant: string;
  screen: string;
  rule: string;
  impact: string;
  targets: string[];
}
const found: Found[] = [];
let audits = 0;

async function audit(page: Page, variant: string, screen: string) {
  // let fonts and a step loaded on demand settle before the page is read
  await page.evaluate(() => document.fonts.ready);
  await page.waitForTimeout(250);
  const result = await new AxeBuilder({ page }).options({ rules: ALSO }).withTags(TAGS).analyze();
  audits++;
  const violations = result.violations;
  let undecided = result.incomplete;
  // axe cannot tell the colours of text under the fixed bottom bar or below the fold of a phone; read
  // the contrast again with the whole page in view (the bar then sits over the page's bottom padding)
  const size = page.viewportSize()!;
  const tall = await page.evaluate(() => document.documentElement.scrollHeight);
  if (tall > size.height) {
    await page.setViewportSize({ width: size.width, height: Math.min(tall, 6000) });
    const whole = await new AxeBuilder({ page }).withRules(["color-contrast"]).analyze();
    await page.setViewportSize(size);
    const seen = new Set(violations.flatMap((v) => v.nodes.map((n) => `${v.id} ${n.target.join(" ")}`)));
    for (const v of whole.violations) {
      const nodes = v.nodes.filter((n) => !seen.has(`${v.id} ${n.target.join(" ")}`));
      if (nodes.length) violations.push({ ...v, nodes });
    }
    undecided = [...undecided.filter((v) => v.id !== "color-contrast"), ...whole.incomplete];
  }
  // what axe could not decide (a colour over an image, say) is counted for a person to look at
  for (const v of undecided) {
    for (const node of v.nodes) {
      const why = `${v.id}: ${[...node.any, ...node.all, ...node.none].map((c) => c.message).join("; ")}`;
      const seen = incomplete.get(why) ?? { n: 0, examples: new Set<string>() };
      seen.n++;
      if (seen.examples.size < 8) seen.examples.add(`${variant} · ${screen}: ${node.target.map(String).join(" ")}`);
      incomplete.set(why, seen);
    }
  }
  for (const v of violations) {
    const f = {
      variant,
      screen,
      rule: v.id,
      impact: v.impact ?? "none",
      targets: v.nodes.map((n) => n.target.map(String).join(" ")),
    };
    found.push(f);
    console.log(
      `[a11y] ${variant} · ${screen}: ${f.rule} (${f.impact}) on ${f.targets.length}: ${f.targets.join(" | ")}`,
    );
  }
  return violations.length;
}

// The data: a mechanic of the demo club with an invented four (bands 0.10-0.20 / 0.20-0.30, ENGINE_FOUR),
// a check with nothing measured, one with every valve measured (shared with the club for review), and
// one half-way through the re-check; the demo mentor reviews the shared one.
const MEASURED: Record<string, number> = {
  "I1.1": 0.15,
  "I1.2": 0.08,
  "E1.1": 0.25,
  "E1.2": 0.33,
  "I2.1": 0.13,
  "I2.2": 0.15,
  "E2.1": 0.18,
  "E2.2": 0.25,
  "I3.1": 0.23,
  "I3.2": 0.15,
  "E3.1": 0.28,
  "E3.2": 0.25,
  "I4.1": 0.1,
  "I4.2": 0.18,
  "E4.1": 0.38,
  "E4.2": 0.23,
};
const ENGINE_NAME = "Audit four";
let mech: { email: string; password: string };
const ids = {
  engine: crypto.randomUUID(),
  fresh: crypto.randomUUID(),
  measured: crypto.randomUUID(),
  recheck: crypto.randomUUID(),
  under: crypto.randomUUID(),
  underCheck: crypto.randomUUID(),
};

let browser: Browser;
beforeAll(async () => {
  browser = await launch();
  const u = await makeUser("a11y");
  mech = u;
  const clubId = await demoMentorClubId();
  await addMembership(clubId, u.id, ["mechanic"]);
  const api = await signedInClient(baseUrl(), u);
  const reading = (checkId: string, valve: string, extra: Record<string, unknown>) => ({
    name: "reading.put/1",
    args: { checkId, reading: { valve, round: 0, installedStamp: 2.6, ...extra } },
  });
  const valves = Object.keys(MEASURED);
  await pushAccepted(api, [
    { name: "engine.put/1", args: { id: ids.engine, ...ENGINE_FOUR, name: ENGINE_NAME } },
    {
      name: "check.put/1",
      args: { id: ids.fresh, engineId: ids.engine, odometer: 52_000, measuredHot: false, status: "measuring" },
    },
    {
      name: "check.put/1",
      args: { id: ids.measured, engineId: ids.engine, odometer: 41_000, measuredHot: false, status: "measuring" },
    },
    {
      name: "check.put/1",
      args: { id: ids.recheck, engineId: ids.engine, odometer: 30_000, measuredHot: false, status: "verifying" },
    },
    ...valves.map((v) => reading(ids.measured, v, { measured: MEASURED[v], method: "typed" })),
    // the re-check: two valves fitted and waiting, one already measured again in band
    ...valves.map((v) =>
      reading(ids.recheck, v, {
        measured: MEASURED[v],
        method: "typed",
        fittedShim: v === "I1.2" || v === "E1.2" || v === "E4.1" ? 2.7 : null,
      }),
    ),
    {
      name: "reading.put/1",
      args: {
        checkId: ids.recheck,
        reading: {
          valve: "E4.1",
          round: 1,
          installedStamp: 2.7,
          feelerGo: 0.25,
          feelerNoGo: 0.28,
          measured: 0.25,
          method: "feeler",
        },
      },
    },
    { name: "tray.put/1", args: { id: crypto.randomUUID(), size: 2.75, count: 2 } },
    // an engine with its shims under the buckets: the Fit step's cams-out sequence and the re-check's two-turn check
    { name: "engine.put/2", args: { id: ids.under, ...ENGINE_FOUR, name: "Under-bucket four", shimPosition: "under" } },
    {
      name: "check.put/1",
      args: { id: ids.underCheck, engineId: ids.under, odometer: 12_000, measuredHot: false, status: "measuring" },
    },
    ...valves.map((v) => reading(ids.underCheck, v, { measured: MEASURED[v], method: "typed" })),
  ]);
  const share = await api.post(`/api/checks/${ids.measured}/shares`, { clubId });
  expect(share.status).toBe(201);
});

/**
 * WCAG 1.4.11 Non-text Contrast, which axe does not test: a text field or select shows where it is by
 * its edge alone, so the edge needs 3:1 against what is around it. Returns the fields that fall short.
 */
function faintFields(page: Page) {
  return page.evaluate(() => {
    const rgb = (c: string) => (c.match(/[\d.]+/g) ?? []).map(Number);
    const lum = ([r, g, b]: number[]) => {
      const f = (v: number) => ((v /= 255) <= 0.03928 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
      return 0.2126 * f(r!) + 0.7152 * f(g!) + 0.0722 * f(b!);
    };
    const around = (el: Element) => {
      for (let a = el.parentElement; a; a = a.parentElement) {
        const c = rgb(getComputedStyle(a).backgroundColor);
        if (c.length === 3 || (c.length === 4 && c[3]! > 0)) return c;
      }
      return rgb(getComputedStyle(document.documentElement).backgroundColor);
    };
    const short: string[] = [];
    const fields = document.querySelectorAll<HTMLElement>(
      'input:not([type="radio"]):not([type="checkbox"]):not([type="file"]):not([type="hidden"]), select, textarea',
    );
    for (const el of fields) {
      if (!el.offsetParent) continue;
      const [a, b] = [lum(rgb(getComputedStyle(el).borderTopColor)), lum(around(el))].sort((x, y) => y - x);
      const ratio = (a! + 0.05) / (b! + 0.05);
      if (ratio < 3) short.push(`${el.getAttribute("aria-label") ?? (el.id || el.tagName)}: ${ratio.toFixed(2)}`);
    }
    return { checked: fields.length, short };
  });
}

const totals = { audits: 0, violations: 0, elements: 0 };
afterAll(async () => {
  await browser?.close();
  totals.audits = audits;
  totals.violations = found.length;
  totals.elements = found.reduce((n, f) => n + f.targets.length, 0);
  console.log(`[a11y] ${totals.audits} audits, ${totals.violations} violations, ${totals.elements} elements affected`);
  console.log(`[a11y] left for a person (axe's "incomplete", by reason): ${incomplete.size ? "" : "nothing"}`);
  for (const [why, s] of [...incomplete].sort((a, b) => b[1].n - a[1].n))
    console.log(`[a11y]   ${s.n} × ${why}, e.g.\n[a11y]     ${[...s.examples].join("\n[a11y]     ")}`);
});

async function context(scheme: "light" | "dark", width: number): Promise<{ ctx: BrowserContext; page: Page }> {
  const ctx = await phoneContext(browser, scheme);
  const page = await ctx.newPage();
  await page.setViewportSize({ width, height: 800 });
  return { ctx, page };
}

const check = (id: string, step: string) => `${baseUrl()}/check?id=${id}&step=${step}`;

describe("the audit itself", () => {
  it("finds faults planted in a page: a missing text alternative, low contrast, a name that drops its visible label", async () => {
    const ctx = await phoneContext(browser, "light");
    const page = await ctx.newPage();
    await page.setContent(
      `<!doctype html><html lang="en"><head><title>Planted</title></head><body><main><h1>Planted</h1>` +
        `<img src="data:image/gif;base64,R0lGODlhAQABAAAAACw=" width="20" height="20">` +
        `<p style="color:#8a8a8a;background:#ffffff">faint words</p>` +
        `<button type="button" aria-label="Cyl 1 intake">I1.1</button></main></body></html>`,
    );
    const result = await new AxeBuilder({ page }).options({ rules: ALSO }).withTags(TAGS).analyze();
    expect(result.violations.map((v) => v.id).sort()).toEqual([
      "color-contrast",
      "image-alt",
      "label-content-name-mismatch",
    ]);
    await ctx.close();
  });
});

describe("axe finds nothing on any screen", () => {
  for (const v of VARIANTS) {
    it(`in ${v.name}`, { timeout: 300_000 }, async () => {
      const before = found.length;
      const run = (page: Page, screen: string) => audit(page, v.name, screen);

      // signed out
      {
        const { ctx, page } = await context(v.scheme, v.width);
        await page.goto(baseUrl());
        await page.getByRole("heading", { level: 1 }).waitFor();
        await run(page, "home, signed out");
        for (const [path, heading] of [
          ["/sign-in", /Sign in/],
          ["/sign-up", /Create/],
          ["/forgot-password", /password/i],
          // what a mail's "to stop them" link opens (the token is checked only on the press)
          ["/unsubscribe?token=x", /Stop e-mails/],
        ] as const) {
          await page.goto(`${baseUrl()}${path}`);
          await page.getByRole("heading", { level: 1, name: heading }).waitFor();
          await run(page, path);
        }
        await ctx.close();
      }

      // the mechanic
      {
        const { ctx, page } = await context(v.scheme, v.width);
        await signInAs(page, mech.email, mech.password);
        await page.getByRole("link", { name: new RegExp(ENGINE_NAME) }).waitFor();
        await run(page, "engines");
        await page.goto(`${baseUrl()}/engine?id=${ids.engine}`);
        await page.getByRole("heading", { name: ENGINE_NAME }).waitFor();
        await page
          .getByText(/41,000/)
          .first()
          .waitFor();
        await run(page, "an engine");
        await page.goto(`${baseUrl()}/engine/edit`);
        await page.getByRole("button", { name: "Save engine" }).click();
        await page.locator('[aria-invalid="true"]').first().waitFor();
        await run(page, "engine form, errors showing");
        const edges = await faintFields(page);
        expect(edges.checked).toBeGreaterThan(5);
        expect(edges.short).toEqual([]);
        await page.goto(`${baseUrl()}/checks`);
        await page
          .getByText(/41,000/)
          .first()
          .waitFor();
        await run(page, "checks");
        await page.goto(`${baseUrl()}/tray`);
        await page.getByText(/2\.75/).first().waitFor();
        await run(page, "tray");
        await page.goto(`${baseUrl()}/club`);
        await page
          .getByText(/Kestrel Hollow/)
          .first()
          .waitFor();
        await run(page, "club");
        await page.goto(`${baseUrl()}/account`);
        await page.getByRole("checkbox", { name: /E-mail me about/ }).waitFor();
        await run(page, "account");

        await page.goto(check(ids.fresh, "prepare"));
        await page.getByRole("checkbox", { name: /Engine cold/ }).waitFor();
        await run(page, "check: Prepare");
        await page.goto(check(ids.fresh, "measure"));
        await page.getByText("0 of 16 valves measured").waitFor();
        await page.locator("article[data-valve]").waitFor();
        await run(page, "check: Measure, nothing measured");
        await page.goto(check(ids.measured, "measure"));
        await page.getByText("16 of 16 valves measured").waitFor();
        await page.locator("article[data-valve]").waitFor();
        await run(page, "check: Measure with readings");
        await page.goto(check(ids.measured, "plan"));
        await page.getByText("Plan per valve").waitFor();
        await page.getByText(/waiting for a mentor/).waitFor({ timeout: 20_000 });
        await run(page, "check: Plan");
        await page.goto(check(ids.measured, "fit"));
        await page.getByRole("heading", { name: /Swap list/ }).waitFor();
        await page.getByRole("checkbox").first().waitFor();
        await run(page, "check: Fit");
        await page.goto(check(ids.underCheck, "fit"));
        await page.getByRole("heading", { name: "Fit with the cams out" }).waitFor();
        await page.getByTestId("task-turn").getByRole("checkbox").waitFor();
        await run(page, "check: Fit, shims under the buckets");
        await page.goto(check(ids.underCheck, "verify"));
        await page.getByTestId("recheck-turn").waitFor();
        await run(page, "check: Re-check, the two-turn check first");
        await page.goto(check(ids.recheck, "verify"));
        await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
        await page.locator("article[data-valve]").nth(2).waitFor();
        await run(page, "check: Re-check");
        await ctx.close();
      }

      // the mentor
      {
        const { ctx, page } = await context(v.scheme, v.width);
        await signInAs(page, "teodor@kestrel-hollow.example");
        await page.goto(`${baseUrl()}/club`);
        await page.getByRole("link", { name: new RegExp(ENGINE_NAME) }).waitFor();
        await run(page, "club: review queue");
        await page.goto(`${baseUrl()}/review?id=${ids.measured}`);
        await page.getByText("read-only: you are reviewing", { exact: false }).waitFor();
        await page.getByText("Plan per valve").waitFor();
        await run(page, "a mentor's review");
        await ctx.close();
      }

      const mine = found.slice(before);
      expect(mine.map((f) => `${f.screen}: ${f.rule} (${f.impact}) ${f.targets.join(" | ")}`)).toEqual([]);
    });
  }
});

/**
 * Long names, as people type them (invented): a member's double name, an engine named with one
 * German compound, a club named by a pasted link, a note with a long unbroken word.
 */
const LONG = {
  member: "Maximiliane-Friederike Oberhausen-Wittgensteinova",
  engine: "Ventilspieleinstellungsgemeinschaftsversammlungsmotorrad",
  club: "https://forum.example/KestrelHollowMotorcycleRestorationFellowshipNorth",
  word: "Nockenwellenlagerdeckelschraubenanzugsdrehmomentangabe",
};

/** What sticks out past the right edge of the phone (a scrolling box's own content aside). */
function overflow(page: Page) {
  return page.evaluate(() => {
    const w = document.documentElement.clientWidth;
    const wide: string[] = [];
    for (const el of document.querySelectorAll<HTMLElement>("body *")) {
      const r = el.getBoundingClientRect();
      if (r.width === 0 || r.right <= w + 0.5) continue;
      // inside a box that scrolls sideways, it is that box's content
      let inScroller = false;
      for (let a = el.parentElement; a && a !== document.body; a = a.parentElement) {
        const o = getComputedStyle(a).overflowX;
        if (o === "auto" || o === "scroll" || o === "hidden") inScroller = true;
      }
      if (!inScroller)
        wide.push(
          `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ""}.${String(el.className).split(" ").slice(0, 3).join(".")} right ${Math.round(r.right)}`,
        );
    }
    return { page: document.documentElement.scrollWidth, width: w, wide: wide.slice(0, 6) };
  });
}

describe("every screen reflows at 320 px with long names", () => {
  const long = { engine: crypto.randomUUID(), check: crypto.randomUUID(), planned: crypto.randomUUID() };
  let user: { email: string; password: string };
  beforeAll(async () => {
    const u = await makeUser("a11y-long");
    user = u;
    const db = await rawConnection();
    await db.query("UPDATE users SET name = ? WHERE id = ?", [LONG.member, u.id]);
    await db.end();
    const api = await signedInClient(baseUrl(), u);
    const club = await api.post("/api/clubs", { name: LONG.club });
    expect(club.status).toBe(201);
    const clubId = (club.json.club as { id: string }).id;
    const valves = Object.keys(MEASURED);
    const reading = (checkId: string, valve: string, extra: Record<string, unknown>) => ({
      name: "reading.put/1",
      args: { checkId, reading: { valve, round: 0, installedStamp: 2.6, ...extra } },
    });
    await pushAccepted(api, [
      { name: "engine.put/1", args: { id: long.engine, ...ENGINE_FOUR, name: LONG.engine } },
      {
        name: "check.put/1",
        args: {
          id: long.check,
          engineId: long.engine,
          odometer: 123_456,
          measuredHot: false,
          status: "verifying",
          notes: LONG.word,
        },
      },
      ...valves.map((v) =>
        reading(long.check, v, {
          measured: MEASURED[v],
          method: "typed",
          fittedShim: v === "I1.2" || v === "E4.1" ? 2.7 : null,
        }),
      ),
      {
        name: "check.put/1",
        args: { id: long.planned, engineId: long.engine, odometer: 99_000, measuredHot: false, status: "planned" },
      },
      ...valves.map((v) => reading(long.planned, v, { measured: MEASURED[v], method: "typed" })),
      {
        name: "tray.put/1",
        args: { id: crypto.randomUUID(), size: 2.555, measuredSize: true, count: 12, shimDiameter: 10.48 },
      },
      {
        name: "pool.offer/1",
        args: {
          id: crypto.randomUUID(),
          clubId,
          size: 2.555,
          measuredSize: true,
          count: 3,
          shimDiameter: 10.48,
          note: LONG.word,
        },
      },
      {
        name: "comment.add/1",
        args: { id: crypto.randomUUID(), checkId: long.planned, body: `Look at ${LONG.word} first.`, valve: "E4.1" },
      },
    ]);
    const share = await api.post(`/api/checks/${long.planned}/shares`, { clubId });
    expect(share.status).toBe(201);
  });

  for (const scheme of ["light", "dark"] as const)
    it(
      `in ${scheme} at 320 px: no screen is wider than the phone, and axe finds nothing`,
      { timeout: 300_000 },
      async () => {
        const before = found.length;
        const variant = `${scheme} 320, long names`;
        const wide: string[] = [];
        const { ctx, page } = await context(scheme, 320);
        const look = async (screen: string) => {
          await audit(page, variant, screen);
          const o = await overflow(page);
          if (o.page > o.width) wide.push(`${screen}: ${o.page} px wide (${o.wide.join("; ")})`);
          await page.screenshot({
            path: `test-results/a11y-320-${scheme}-${screen.replace(/[^a-z0-9]+/gi, "-")}.png`,
            fullPage: true,
          });
        };
        await page.goto(`${baseUrl()}/sign-in`);
        await page.getByRole("heading", { level: 1, name: /Sign in/ }).waitFor();
        await look("sign in");
        await signInAs(page, user.email, user.password);
        await page.getByRole("link", { name: new RegExp(LONG.engine) }).waitFor();
        await look("engines");
        await page.goto(`${baseUrl()}/engine?id=${long.engine}`);
        await page.getByRole("heading", { name: LONG.engine }).waitFor();
        await page
          .getByText(/123,456/)
          .first()
          .waitFor();
        await look("an engine");
        await page.goto(`${baseUrl()}/engine/edit?id=${long.engine}`);
        await page.getByRole("button", { name: "Save engine" }).waitFor();
        await look("engine form");
        await page.goto(`${baseUrl()}/checks`);
        await page
          .getByText(/123,456/)
          .first()
          .waitFor();
        await look("checks");
        await page.goto(`${baseUrl()}/tray`);
        await page
          .getByText(/2\.555/)
          .first()
          .waitFor();
        await look("tray");
        // the tray's buttons are on the phone, not past its edge
        const plus = (await page.getByRole("button", { name: "One more 2.555 mm" }).boundingBox())!;
        expect(plus.x + plus.width).toBeLessThanOrEqual(320);
        await page.goto(`${baseUrl()}/club`);
        await page.getByRole("heading", { name: LONG.club }).waitFor();
        await look("club");
        await page.goto(`${baseUrl()}/account`);
        await page.getByRole("checkbox", { name: /E-mail me about/ }).waitFor();
        await look("account");
        for (const [id, step, ready] of [
          [long.planned, "prepare", () => page.getByRole("checkbox", { name: /Engine cold/ }).waitFor()],
          [long.planned, "measure", () => page.locator("article[data-valve]").waitFor()],
          [long.planned, "plan", () => page.getByText("Plan per valve").waitFor()],
          [long.planned, "fit", () => page.getByRole("checkbox").first().waitFor()],
          [long.check, "verify", () => page.locator("article[data-valve]").nth(1).waitFor()],
        ] as const) {
          await page.goto(check(id, step));
          await ready();
          await look(`check: ${step}`);
        }
        await page.goto(`${baseUrl()}/review?id=${long.planned}`);
        await page.getByText(/Look at Nocken/).waitFor();
        await look("review, the owner's view");
        await ctx.close();
        expect(wide).toEqual([]);
        const mine = found.slice(before);
        expect(mine.map((f) => `${f.screen}: ${f.rule} (${f.impact}) ${f.targets.join(" | ")}`)).toEqual([]);
      },
    );
});
