import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { signedInClient } from "../support/api";
import { baseUrl, signedInPhone } from "../support/browser";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import { browserPerFile } from "../support/per-file";

/**
 * A valve measured with the keyboard alone (a phone with a keyboard, or a switch user): the skip
 * link, focus moved to what a step or a diagram pick opens, the result read out in a polite live
 * region, whole focus rings, and few enough Tab stops to get anywhere (WCAG 2.1: 2.1.1 Keyboard,
 * 2.4.1 Bypass Blocks, 2.4.3 Focus Order, 2.4.7 Focus Visible, 4.1.3 Status Messages).
 */
const browser = browserPerFile();

/** What has focus: its tag, its name as a screen reader would start it, and where it sits. */
function focused(page: Page) {
  return page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null;
    if (!el || el === document.body)
      return { tag: "BODY", name: "", valve: null as string | null, group: null as string | null };
    return {
      tag: el.tagName,
      name: (el.getAttribute("aria-label") ?? el.textContent ?? "").trim().replace(/\s+/g, " "),
      valve: el.closest("article[data-valve]")?.getAttribute("data-valve") ?? null,
      group: el.closest('[role="group"]')?.getAttribute("aria-label") ?? null,
    };
  });
}

/** Press Tab until the focused element's name matches; fails after `max` presses. */
async function tabTo(page: Page, name: RegExp, max = 80) {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press("Tab");
    const f = await focused(page);
    if (name.test(f.name)) return f;
  }
  throw new Error(`no Tab stop named ${name} within ${max} presses`);
}

/** Every Tab stop of the page once round, from where focus is now. */
async function tabStops(page: Page) {
  await page.evaluate(() =>
    document.querySelectorAll("[data-kb-seen]").forEach((e) => e.removeAttribute("data-kb-seen")),
  );
  const names: string[] = [];
  for (let i = 0; i < 600; i++) {
    await page.keyboard.press("Tab");
    const seen = await page.evaluate(() => {
      const el = document.activeElement as HTMLElement | null;
      if (!el || el === document.body) return { again: false, none: true, name: "" };
      const again = el.hasAttribute("data-kb-seen");
      el.setAttribute("data-kb-seen", "");
      return { again, none: false, name: (el.getAttribute("aria-label") ?? el.textContent ?? "").trim().slice(0, 40) };
    });
    if (seen.again) break;
    if (!seen.none) names.push(seen.name);
  }
  return names;
}

describe("a valve measured with the keyboard alone", () => {
  it("skip link, start measuring, pick a valve on the diagram, set its shim, choose a blade, hear the result, open the plan", async () => {
    const u = await makeUser("keyboard");
    const api = await signedInClient(baseUrl(), u);
    const engineId = crypto.randomUUID();
    const checkId = crypto.randomUUID();
    // ENGINE_FOUR: invented bands, intake 0.10-0.20, exhaust 0.20-0.30
    const res = await api.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [
        { id: 1, name: "engine.put/1", args: { id: engineId, ...ENGINE_FOUR, name: "Keyboard four" } },
        {
          id: 2,
          name: "check.put/1",
          args: { id: checkId, engineId, odometer: 20_000, measuredHot: false, status: "measuring" },
        },
      ],
    });
    expect(res.json.rejected ?? []).toEqual([]);

    const { ctx, page } = await signedInPhone(browser, u);
    await page.goto(`${baseUrl()}/check?id=${checkId}`);
    await page.getByRole("checkbox", { name: /Engine cold/ }).waitFor();

    // the first Tab stop skips the header and the step tabs
    await page.keyboard.press("Tab");
    expect((await focused(page)).name).toBe("Skip to content");
    await page.keyboard.press("Enter");
    expect(await page.evaluate(() => document.activeElement?.id)).toBe("content");

    // tick the cautions and start measuring, keys only
    for (let i = 0; i < 6; i++) {
      const f = await tabTo(page, /^[☐☑]/);
      expect(f.name.startsWith("☐")).toBe(true);
      await page.keyboard.press("Space");
    }
    await expect.poll(() => page.getByRole("checkbox", { checked: true }).count()).toBe(6);
    await tabTo(page, /^Start measuring$/);
    await page.keyboard.press("Enter");
    // focus lands on the measuring heading, not the page's body
    await page.getByText("0 of 16 valves measured").waitFor();
    await expect.poll(async () => (await focused(page)).tag).toBe("H2");
    expect((await focused(page)).name).toMatch(/^Position 1 of \d+:/);

    const stops = await tabStops(page);
    console.log(`[keyboard] ${stops.length} Tab stops on the measure step: ${stops.join(" · ")}`);
    expect(stops.length).toBeGreaterThan(10);
    // 510 on the first measuring page, about 45 before the diagram became one stop; now 41
    expect(stops.length).toBeLessThanOrEqual(42);

    // the diagram is one Tab stop, its valves a press of an arrow key apart; Enter on a valve moves
    // focus into that valve's card
    let cell = await tabTo(page, /^[IE]\d\.\d /);
    for (let i = 0; i < 24 && !/^E2\.1 /.test(cell.name); i++) {
      await page.keyboard.press("ArrowRight");
      cell = await focused(page);
    }
    expect(cell).toMatchObject({ tag: "BUTTON", name: "E2.1 to measure" });
    await page.keyboard.press("Enter");
    await expect.poll(async () => (await focused(page)).valve).toBe("E2.1");
    expect(await focused(page)).toMatchObject({ tag: "H3", name: "Cyl 2 exhaust 1" });

    // an unset shim says so in words; the stepper sets it, and the new value is read out where it shows
    const shim = page.getByTestId("shim-E2.1");
    await expect(shim.innerText()).resolves.toBe("not set");
    await expect(shim.getAttribute("aria-live")).resolves.toBe("polite");
    await tabTo(page, /^Thicker shim for E2\.1$/);
    await page.keyboard.press("Enter");
    await expect.poll(() => shim.innerText()).toMatch(/^\d\.\d\d$/);
    const stamp = Number(await shim.innerText());

    // choose a blade: its focus ring is whole, not cut off by a scroll box around the strip
    const blade = await tabTo(page, /^0\.25$/);
    expect(blade.group).toBe("Feeler blades for E2.1");
    const ring = await page.evaluate(() => {
      const el = document.activeElement as HTMLElement;
      const s = getComputedStyle(el);
      const out = parseFloat(s.outlineWidth) + parseFloat(s.outlineOffset);
      const r = el.getBoundingClientRect();
      const clipped: string[] = [];
      for (let a = el.parentElement; a && a !== document.body; a = a.parentElement) {
        const st = getComputedStyle(a);
        if (st.overflowX === "visible" && st.overflowY === "visible") continue;
        const b = a.getBoundingClientRect();
        const left = b.left + parseFloat(st.borderLeftWidth);
        const right = b.right - parseFloat(st.borderRightWidth);
        const top = b.top + parseFloat(st.borderTopWidth);
        const bottom = b.bottom - parseFloat(st.borderBottomWidth);
        if (
          r.left - out < left - 0.5 ||
          r.right + out > right + 0.5 ||
          r.top - out < top - 0.5 ||
          r.bottom + out > bottom + 0.5
        )
          clipped.push(`${a.tagName}.${a.className}`);
      }
      return { style: s.outlineStyle, width: parseFloat(s.outlineWidth), clipped };
    });
    expect(ring.style).not.toBe("none");
    expect(ring.width).toBeGreaterThanOrEqual(2);
    expect(ring.clipped).toEqual([]);
    await page.keyboard.press("Enter");

    // the result is said in a polite live region, and focus moves on with the card to the next valve
    const said = page.getByTestId("measure-said");
    await expect(said.getAttribute("role")).resolves.toBe("status");
    await expect(said.getAttribute("aria-live")).resolves.toBe("polite");
    await expect
      .poll(() => said.innerText())
      .toMatch(/^E2\.1: 0\.25 mm goes, 0\.28 mm does not, ✓ in band\. Next: [IE]\d\.\d(\. Position \d+ of \d+: .+)?$/);
    await page.getByText("1 of 16 valves measured").waitFor();
    const nextValve = /Next: ([IE]\d\.\d)/.exec(await said.innerText())![1];
    await expect.poll(async () => (await focused(page)).valve).toBe(nextValve);
    expect((await focused(page)).tag).toBe("H3");
    expect(stamp).toBeGreaterThan(2);

    // on to the plan: focus lands on its heading
    await tabTo(page, /See the shim plan$/);
    await page.keyboard.press("Enter");
    await expect.poll(async () => (await focused(page)).name, { timeout: 15_000 }).toBe("Shim plan");
    expect((await focused(page)).tag).toBe("H2");
    await page.screenshot({ path: "test-results/keyboard-plan.png" });
    await ctx.close();
  });
});
