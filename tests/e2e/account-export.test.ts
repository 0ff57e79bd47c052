import { readFile } from "node:fs/promises";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { strFromU8, unzipSync } from "fflate";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { AxeBuilder } from "@axe-core/playwright";
import { baseUrl, launch, signedInPhone } from "../support/browser";
import { signedInClient } from "../support/api";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import { EXPORT_DATA_ENTRY, parseExport } from "@/lib/export/schema";

/**
 * The account page's export on a 360 px phone: "Export everything" hands the browser the server's
 * zip as a download, and "Export from this phone" makes the same kind of file from the local copy
 * with the network cut off.
 */
let browser: Browser;
let ctx: BrowserContext;
let page: Page;

beforeAll(async () => {
  const u = await makeUser("e2e-export");
  const api = await signedInClient(baseUrl(), u);
  const engineId = (await api.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await api.post(`/api/engines/${engineId}/checks`, { odometer: 4_200 })).json.check.id as string;
  // values from memory: one tight intake read with blades
  await api.put(`/api/checks/${checkId}/readings`, {
    readings: [{ valve: "I1.1", installedStamp: 2.8, feelerGo: 0.05, feelerNoGo: 0.08 }],
  });
  browser = await launch();
  ({ ctx, page } = await signedInPhone(browser, u, { colorScheme: "light", acceptDownloads: true }));
  // the phone's copy has the engine once the first sync is done
  await page.getByText(ENGINE_FOUR.name).first().waitFor();
  await page.goto(`${baseUrl()}/account`);
  await page.getByRole("heading", { name: "Your data" }).waitFor();
});

afterAll(async () => {
  await browser?.close();
});

async function zipOf(tap: () => Promise<void>) {
  const [download] = await Promise.all([page.waitForEvent("download"), tap()]);
  const path = await download.path();
  const files = unzipSync(new Uint8Array(await readFile(path)));
  const parsed = parseExport(JSON.parse(strFromU8(files[EXPORT_DATA_ENTRY]!)));
  if (!parsed.ok) throw new Error(parsed.refusal.message);
  return { name: download.suggestedFilename(), files, doc: parsed.doc };
}

describe("the account export at 360 px", () => {
  it("fits the narrow screen, light and dark, with nothing for axe to find", async () => {
    const width = await page.evaluate(() => document.documentElement.scrollWidth);
    expect(width).toBeLessThanOrEqual(360);
    await page.getByRole("heading", { name: "Your data" }).scrollIntoViewIfNeeded();
    for (const scheme of ["light", "dark"] as const) {
      await page.emulateMedia({ colorScheme: scheme });
      await page.evaluate(() => document.fonts.ready);
      await page.screenshot({ path: `test-results/account-export-360-${scheme}.png`, fullPage: true });
      // the whole page in view, so the contrast of text below the fold is read too
      const tall = await page.evaluate(() => document.documentElement.scrollHeight);
      await page.setViewportSize({ width: 360, height: Math.max(780, Math.min(tall, 4000)) });
      const result = await new AxeBuilder({ page })
        .withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"])
        .analyze();
      await page.setViewportSize({ width: 360, height: 780 });
      expect(
        result.violations.map((v) => `${scheme}: ${v.id} ${v.nodes.map((n) => n.target.join(" ")).join(", ")}`),
      ).toEqual([]);
    }
    await page.emulateMedia({ colorScheme: "light" });
  });

  it("Export everything downloads the server's zip", async () => {
    const { name, files, doc } = await zipOf(() => page.getByRole("button", { name: "Export everything" }).tap());
    expect(name).toMatch(/^lashwright-export-\d{4}-\d\d-\d\d\.zip$/);
    expect(doc.source).toBe("server");
    expect(doc.engines.map((e) => e.name)).toEqual([ENGINE_FOUR.name]);
    expect(doc.readings).toHaveLength(1);
    expect(Object.keys(files).filter((n) => n.startsWith("csv/"))).toHaveLength(1);
    await page.getByText(/Your export is downloading as lashwright-export-/).waitFor();
  });

  it("Export from this phone works with no network, from the local copy", async () => {
    await ctx.setOffline(true);
    try {
      const { name, files, doc } = await zipOf(() =>
        page.getByRole("button", { name: "Export from this phone" }).tap(),
      );
      expect(name).toMatch(/^lashwright-phone-export-\d{4}-\d\d-\d\d\.zip$/);
      expect(doc.source).toBe("phone");
      expect(doc.engines.map((e) => e.name)).toEqual([ENGINE_FOUR.name]);
      expect(doc.readings.map((r) => [r.valve, r.feelerGo, r.feelerNoGo, r.found.clearance])).toEqual([
        ["I1.1", 0.05, 0.08, "blade"],
      ]);
      expect(Object.keys(files).filter((n) => n.startsWith("csv/"))).toHaveLength(1);
      await page.getByText(/Saved lashwright-phone-export-.* from this phone/).waitFor();
      await page.screenshot({ path: "test-results/account-export-offline.png", fullPage: true });
    } finally {
      await ctx.setOffline(false);
    }
  });
});
