import { beforeAll, describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { signedInClient, type Client } from "../support/api";
import { baseUrl, narrowPhone, signInAs } from "../support/browser";
import { demoMentorClubId } from "../support/db";
import { addMembership, makeUser } from "../support/fixtures";
import { browserPerFile } from "../support/per-file";
import { pushAccepted } from "../support/push";
import { layout, USUAL_BANDS } from "../support/engines";

/**
 * At the bench on a 360 px phone (light and dark): the inline six of the report (4 valves a
 * cylinder, firing 1-5-3-6-2-4, cylinder 1 on the right). Fit takes one tick per changed valve;
 * the re-check goes by crank position under Measure's guide; diagram cells and blades are 44 px
 * targets with room between; the plan says why both aims agree; the mentor taps a valve to read
 * and comment on it; a mail's #comments or #verdict lands on and focuses what it names. Readings invented.
 */
const browser = browserPerFile();
let clubId: string;
beforeAll(async () => {
  clubId = await demoMentorClubId();
});

const phone = (scheme: "light" | "dark") => narrowPhone(browser, { colorScheme: scheme });

/**
 * The six, every valve typed in band on a 2.60 except three (worked by hand, gap = shim + clearance):
 *   I1.1: 2.60 + 0.30 = 2.90, target 0.15 -> 2.75, which E2.1 gives up
 *   E2.1: 2.75 + 0.40 = 3.15, target 0.25 -> 2.90, bought
 *   I5.1: 2.60 + 0.05 = 2.65, target 0.15 -> 2.50, bought
 */
const OUT: Record<string, [number, number]> = { "I1.1": [2.6, 0.3], "E2.1": [2.75, 0.4], "I5.1": [2.6, 0.05] };
async function six(api: Client) {
  const engineId = crypto.randomUUID();
  const fitCheck = crypto.randomUUID();
  const shared = crypto.randomUUID();
  const valves = [1, 2, 3, 4, 5, 6].flatMap((c) => [`I${c}.1`, `I${c}.2`, `E${c}.1`, `E${c}.2`]);
  const typed = (checkId: string, v: string) => {
    const [shim, gap] = OUT[v] ?? [2.6, v.startsWith("I") ? 0.15 : 0.25];
    return {
      name: "reading.put/1",
      args: { checkId, reading: { valve: v, round: 0, installedStamp: shim, measured: gap, method: "typed" } },
    };
  };
  await pushAccepted(api, [
    {
      name: "engine.put/2",
      args: {
        id: engineId,
        name: "Bench six",
        ...layout([1, 5, 3, 6, 2, 4], 2),
        mirrored: true,
        ...USUAL_BANDS,
        shimPosition: "over",
      },
    },
    { name: "check.put/1", args: { id: fitCheck, engineId, odometer: 61_000, status: "planned" } },
    ...valves.map((v) => typed(fitCheck, v)),
    { name: "check.put/1", args: { id: shared, engineId, odometer: 58_000, status: "planned" } },
    ...valves.map((v) => typed(shared, v)),
  ]);
  const share = await api.post(`/api/checks/${shared}/shares`, { clubId });
  expect(share.status).toBe(201);
  return { engineId, fitCheck, shared };
}

/** React reads the input event: set the value as typing would. */
async function type(page: Page, label: string, text: string) {
  await page.getByLabel(label).evaluate((el, t) => {
    const set = Object.getOwnPropertyDescriptor(HTMLTextAreaElement.prototype, "value")!.set!;
    set.call(el, t);
    el.dispatchEvent(new Event("input", { bubbles: true }));
  }, text);
}

/** The focused element's id, text and whether it is on screen. */
const focused = (page: Page) =>
  page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null;
    const r = el?.getBoundingClientRect();
    return { id: el?.id ?? "", text: el?.innerText ?? "", onScreen: !!r && r.top >= 0 && r.top < window.innerHeight };
  });

describe("the bench screens on a 360 px phone", () => {
  for (const scheme of ["light", "dark"] as const)
    it(`ticks per change, re-checks by crank position, plans with a reason, reviews by tapping a valve, lands on a mail's link (${scheme})`, async () => {
      const u = await makeUser(`screens-${scheme}`);
      await addMembership(clubId, u.id, ["mechanic"]);
      const api = await signedInClient(baseUrl(), u);
      const ids = await six(api);
      const ctx = await phone(scheme);
      const page = await ctx.newPage();
      await signInAs(page, u.email, u.password);

      // Measure: diagram cells and blades are 44 px targets with 8 px between neighbours
      await page.goto(`${baseUrl()}/check?id=${ids.fitCheck}&step=measure`);
      const diagram = page.getByRole("figure", { name: "Engine diagram" });
      await diagram.locator("button[data-valve]").first().waitFor({ timeout: 20_000 });
      const cells = await diagram.locator("button[data-valve]").evaluateAll((bs) =>
        bs.map(
          (b) =>
            ({ v: (b as HTMLElement).dataset.valve!, ...b.getBoundingClientRect().toJSON() }) as {
              v: string;
              x: number;
              y: number;
              width: number;
              height: number;
            },
        ),
      );
      expect(cells).toHaveLength(24);
      for (const c of cells) expect(Math.min(c.width, c.height)).toBeGreaterThanOrEqual(44);
      // cylinder 1 on the right: I1.2 then I1.1, with room between
      const [a, b] = [cells.find((c) => c.v === "I1.2")!, cells.find((c) => c.v === "I1.1")!];
      expect(b.x - (a.x + a.width)).toBeGreaterThanOrEqual(8);
      await page.locator("article[data-valve]").waitFor();
      const blades = await page
        .getByRole("group", { name: /Feeler blades for/ })
        .getByRole("button")
        .evaluateAll((bs) => bs.map((x) => x.getBoundingClientRect().toJSON() as DOMRect));
      for (const bl of blades) expect(Math.min(bl.width, bl.height)).toBeGreaterThanOrEqual(44);
      const sameRow = blades.filter((bl) => Math.abs(bl.y - blades[0]!.y) < 1);
      expect(sameRow[1]!.x - (sameRow[0]!.x + sameRow[0]!.width)).toBeGreaterThanOrEqual(8);
      await page.screenshot({ path: `test-results/screens-measure-${scheme}.png`, fullPage: true });

      // Plan: both aims give this plan, and the screen says why
      await page.goto(`${baseUrl()}/check?id=${ids.fitCheck}&step=plan`);
      await expect(page.getByTestId("both-aims").innerText({ timeout: 20_000 })).resolves.toBe(
        "Both aims give this plan: no other choice of shims lands nearer the target, and none needs fewer shims bought or lenders asked.",
      );
      await expect(page.getByTestId("buy-list").innerText()).resolves.toBe("1 × 2.50 mm\n1 × 2.90 mm");
      await page.screenshot({ path: `test-results/screens-plan-${scheme}.png`, fullPage: true });

      // Fit: one tick per changed valve (three, not five), with both ends of the swap in one
      await page.getByRole("button", { name: "Fit the 3 changes" }).tap();
      await page.getByRole("heading", { name: "Swap list, in working order" }).waitFor();
      const ticks = page.getByRole("list", { name: /Swaps/ }).getByRole("checkbox");
      const words = (await ticks.allInnerTexts()).map((t) => t.replace(/^[☐☑]\s*/, "").replace(/\s+/g, " "));
      expect(words).toEqual([
        "1. Cyl 1 intake 1: take out its 2.60 and put it on the tray, then take the 2.75 out of Cyl 2 exhaust 1 and fit it",
        "2. Cyl 2 exhaust 1: fit a new 2.90 (bought)",
        "3. Cyl 5 intake 1: take out its 2.60 and put it on the tray, then fit a new 2.50 (bought)",
      ]);
      for (const t of await ticks.all()) {
        await t.tap();
        await expect.poll(() => t.getAttribute("aria-checked")).toBe("true");
      }
      await page.screenshot({ path: `test-results/screens-fit-${scheme}.png`, fullPage: true });

      // Re-check: by crank position, under Measure's guide, only the changed valves named
      await page.getByRole("button", { name: "Re-measure the changed valves" }).tap();
      await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
      const groups = page.getByTestId("recheck-position");
      await expect.poll(() => groups.count()).toBe(2);
      const seen = [];
      for (let i = 0; i < 2; i++) {
        const g = groups.nth(i);
        seen.push([
          await g.getByRole("heading", { level: 3 }).first().innerText(),
          await g.locator("article[data-valve]").evaluateAll((as) => as.map((x) => (x as HTMLElement).dataset.valve)),
        ]);
      }
      // the guide for 1-5-3-6-2-4 (as Measure gives it): cylinder 1's TDC frees intakes 1, 2, 4 and
      // exhausts 1, 3, 5; a turn of 360 degrees to cylinder 6's TDC frees the rest
      expect(seen).toEqual([
        ["Position 1 of 2: Turn to cylinder 1 firing TDC (compression), then measure intake 1", ["I1.1"]],
        ["Position 2 of 2: Turn on 360° to cylinder 6 firing TDC, then measure intake 5; exhaust 2", ["I5.1", "E2.1"]],
      ]);
      await page.screenshot({ path: `test-results/screens-recheck-${scheme}.png`, fullPage: true });

      // the mentor taps a valve on the diagram: its readings and a box to comment on it
      const mctx = await phone(scheme);
      const mentor = await mctx.newPage();
      await signInAs(mentor, "teodor@kestrel-hollow.example");
      await mentor.goto(`${baseUrl()}/review?id=${ids.shared}`);
      await mentor.getByText("read-only: you are reviewing", { exact: false }).waitFor({ timeout: 20_000 });
      await mentor.getByRole("figure", { name: "Engine diagram" }).locator('button[data-valve="E2.1"]').tap();
      const panel = mentor.getByTestId("valve-panel");
      await expect(panel.getByRole("heading", { level: 2 }).innerText()).resolves.toBe("Valve E2.1");
      await expect(focused(mentor)).resolves.toMatchObject({ id: "valve-panel-title", onScreen: true });
      await expect(panel.getByRole("list", { name: "Readings of E2.1" }).innerText()).resolves.toMatch(
        /First reading\s+2\.75 stamp · 0\.40? mm typed/,
      );
      await type(mentor, "Comment on E2.1", "E2.1 closed up a lot: measure it again before buying.");
      await panel.getByRole("button", { name: "Post comment on E2.1" }).tap();
      await panel.getByText("E2.1 closed up a lot").waitFor();
      await expect(panel.getByRole("list", { name: "Comments on E2.1" }).innerText()).resolves.toMatch(/on E2\.1/);
      await mentor.screenshot({ path: `test-results/screens-review-tap-${scheme}.png`, fullPage: true });
      await mentor.getByRole("button", { name: /Measure again/ }).tap();
      await mentor.getByTestId("verdict").getByText("↻ Measure again").waitFor();
      // sent: nothing of the mentor's waits on the phone any more
      await mentor.getByTestId("verdict").getByText("waiting to send").waitFor({ state: "detached", timeout: 20_000 });
      await mentor.getByText("waiting to send").first().waitFor({ state: "detached", timeout: 20_000 });
      await mctx.close();

      // the mechanic opens the comment mail's link: the comment is on screen and focused
      await page.goto(`${baseUrl()}/review?id=${ids.shared}#comments`);
      await expect.poll(async () => (await focused(page)).id, { timeout: 20_000 }).toMatch(/^comment-/);
      const f = await focused(page);
      expect(f.onScreen).toBe(true);
      expect(f.text).toContain("E2.1 closed up a lot");
      await page.screenshot({ path: `test-results/screens-mail-comments-${scheme}.png` });
      // and the verdict mail's link
      await page.goto(`${baseUrl()}/review?id=${ids.shared}#verdict`);
      await expect.poll(async () => (await focused(page)).id, { timeout: 20_000 }).toBe("verdict");
      await expect(focused(page)).resolves.toMatchObject({
        onScreen: true,
        text: expect.stringContaining("Measure again"),
      });
      await page.screenshot({ path: `test-results/screens-mail-verdict-${scheme}.png` });
      // the mechanic taps the valve with the comment dot and reads the comment
      const dot = page
        .getByRole("figure", { name: "Engine diagram" })
        .getByRole("button", { name: "E2.1 loose, has comments" });
      await dot.tap();
      await expect(
        page.getByTestId("valve-panel").getByRole("list", { name: "Comments on E2.1" }).innerText(),
      ).resolves.toContain("E2.1 closed up a lot");
      await ctx.close();

      // signed out, the verdict mail's link keeps its #verdict through sign-in and lands there
      const octx = await phone(scheme);
      const out = await octx.newPage();
      await out.goto(`${baseUrl()}/review?id=${ids.shared}#verdict`);
      await out.getByRole("link", { name: "Sign in", exact: true }).tap();
      await out.waitForURL(/\/sign-in\?next=/);
      expect(decodeURIComponent(new URL(out.url()).searchParams.get("next") ?? "")).toBe(
        `/review?id=${ids.shared}#verdict`,
      );
      await out.getByLabel("E-mail").fill(u.email);
      await out.getByLabel("Password").fill(u.password);
      await out.getByRole("button", { name: "Sign in", exact: true }).tap();
      await out.waitForURL(/\/review\?id=/);
      await expect.poll(async () => (await focused(out)).id, { timeout: 20_000 }).toBe("verdict");
      await octx.close();
    }, 180_000);
});
