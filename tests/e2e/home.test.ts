import { describe, expect, it } from "vitest";
import { baseUrl, phoneContext } from "../support/browser";
import { browserPerFile } from "../support/per-file";

const browser = browserPerFile();

describe("the signed-out home page on a phone", () => {
  for (const scheme of ["dark", "light"] as const) {
    it(`renders the product, its steps and the safety note (${scheme} theme)`, async () => {
      const context = await phoneContext(browser, scheme);
      const page = await context.newPage();
      const external: string[] = [];
      page.on("request", (r) => {
        if (!r.url().startsWith(baseUrl()) && !r.url().startsWith("data:")) external.push(r.url());
      });
      const res = await page.goto(baseUrl());
      expect(res?.status()).toBe(200);
      await expect(page.title()).resolves.toMatch(/Lashwright/);
      await expect(page.getByRole("heading", { level: 1 }).innerText()).resolves.toMatch(/valve-clearance workbook/i);
      await expect(page.getByRole("heading", { name: "How a check runs" }).isVisible()).resolves.toBe(true);
      await expect(page.getByText("service manual and a qualified mechanic").isVisible()).resolves.toBe(true);
      // self-hosted fonts: the body face is loaded from our own origin, nothing from outside
      await page.evaluate(() => document.fonts.ready);
      const fontsLoaded = await page.evaluate(() => [...document.fonts].filter((f) => f.status === "loaded").length);
      expect(fontsLoaded).toBeGreaterThan(0);
      expect(external).toEqual([]);
      // large touch targets: every link and button at least 48 px tall
      const small = await page.$$eval("a, button", (els) =>
        els.filter((e) => e.getBoundingClientRect().height < 48).map((e) => e.textContent),
      );
      expect(small).toEqual([]);
      // no sideways scrolling on a phone
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
      expect(overflow).toBeLessThanOrEqual(0);
      await page.screenshot({ path: `test-results/home-${scheme}.png`, fullPage: true });
      await context.close();
    });
  }
});
