import { execFileSync } from "node:child_process";
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { checkPlan, valveViews } from "@/lib/check/derive";
import { camsOut, camsOutWords } from "@/lib/lash";
import type { LocalEngine, LocalReading } from "@/lib/sync/local-db";
import { baseUrl, launch, signedInPhone } from "../support/browser";
import { signedInClient } from "../support/api";
import { makeUser } from "../support/fixtures";
import { layout, USUAL_BANDS } from "../support/engines";

/**
 * The printed worksheet, rendered to PDF by Chromium (page.pdf, print media) for a 4-valve and a
 * 24-valve engine on A4 and on Letter: one page each, holding the engine's name, bands, series, every
 * valve's shim, clearance and new shim with its source, and the buy list, read back with pdftotext.
 * The PDFs are left in test-results/ to look at.
 */
const OUT = path.resolve(__dirname, "../../test-results/worksheet");

// Invented engines (test data): a twin with one intake and one exhaust per cylinder and a 0.025 mm
// series (docs/trade.md: common practice), and an inline six with four
// valves per cylinder firing 1-5-3-6-2-4 (the preset's order).
// The twin's shims sit over its buckets, the six's under them (the six's cams-out steps must still
// leave the sheet on one page).
const TWIN = {
  name: "Test twin, ‘green’ & co",
  ...layout([1, 2], 1),
  intake: { min: 0.1, max: 0.15 },
  exhaust: { min: 0.15, max: 0.2 },
  shims: { min: 1.2, max: 3.0, step: 0.025 },
  shimDiameter: 7.48,
  shimPosition: "over",
};
const SIX = { name: "Test six", ...layout([1, 5, 3, 6, 2, 4], 2), ...USUAL_BANDS, shimPosition: "under" };

// Clearances from the default blade strips, some out of band, so the plan swaps and buys.
const TWIN_READINGS = [
  { valve: "I1.1", installedStamp: 2.4, feelerGo: 0.08, feelerNoGo: 0.09, measured: 0.08 },
  { valve: "E1.1", installedStamp: 2.425, feelerGo: 0.18, feelerNoGo: 0.2, measured: 0.18 },
  { valve: "I2.1", installedStamp: 2.45, installedMicrometer: 2.441, feelerGo: 0.2, feelerNoGo: 0.23, measured: 0.2 },
  { valve: "E2.1", installedStamp: 2.5, feelerGo: 0.1, feelerNoGo: 0.13, measured: 0.1 },
];
const SIX_CLEARANCES = [
  0.15, 0.08, 0.25, 0.33, 0.13, 0.23, 0.28, 0.18, 0.15, 0.1, 0.25, 0.38, 0.2, 0.15, 0.3, 0.23, 0.05, 0.18, 0.25, 0.25,
  0.15, 0.13, 0.4, 0.28,
];
const SIX_VALVES = [1, 2, 3, 4, 5, 6].flatMap((c) => [`I${c}.1`, `I${c}.2`, `E${c}.1`, `E${c}.2`]);
const SIX_READINGS = SIX_VALVES.map((valve, i) => ({
  valve,
  installedStamp: [2.6, 2.75, 2.9, 2.55][i % 4]!,
  feelerGo: SIX_CLEARANCES[i]!,
  measured: SIX_CLEARANCES[i]!,
}));

let browser: Browser;
const made: Record<string, { checkId: string; engine: LocalEngine; readings: typeof TWIN_READINGS }> = {};
let user: { email: string; password: string };

beforeAll(async () => {
  mkdirSync(OUT, { recursive: true });
  user = await makeUser("paper");
  const api = await signedInClient(baseUrl(), user);
  for (const [key, e, rs] of [
    ["twin", TWIN, TWIN_READINGS],
    ["six", SIX, SIX_READINGS],
  ] as const) {
    const engine = (await api.post("/api/engines", e)).json.engine;
    const checkId = (await api.post(`/api/engines/${engine.id}/checks`, { odometer: 23456 })).json.check.id as string;
    const put = await api.put(`/api/checks/${checkId}/readings`, {
      readings: rs.map((r) => ({ ...r, method: "feeler" })),
    });
    expect(put.status).toBe(200);
    made[key] = { checkId, engine: engine as LocalEngine, readings: rs as typeof TWIN_READINGS };
  }
  browser = await launch();
});

afterAll(async () => {
  await browser?.close();
});

const run = (cmd: string, args: string[]) => execFileSync(cmd, args, { encoding: "utf8" });

describe("the printed worksheet", () => {
  for (const key of ["twin", "six"] as const) {
    it(`prints the ${key} on one page of A4 and of Letter, with the engine's values and no app controls`, async () => {
      const { checkId, engine, readings } = made[key]!;
      const { ctx, page } = await signedInPhone(browser, user);
      await page.goto(`${baseUrl()}/check?id=${checkId}&step=plan`);
      await page.getByRole("button", { name: "Print worksheet" }).waitFor();
      await page.locator("article.worksheet").waitFor({ state: "attached" });

      // what the plan says, worked out here by the same core from the same readings
      const local: LocalReading[] = readings.map((r) => ({
        checkId,
        round: 0,
        installedMicrometer: null,
        fittedShim: null,
        method: "feeler",
        ...r,
        feelerNoGo: r.feelerNoGo ?? null,
      }));
      const views = valveViews(engine, local, () => null);
      const plan = checkPlan(engine, views, [])!;
      const fine = key === "twin";
      const shim = (s: number) => s.toFixed(fine ? 3 : 2);

      for (const format of ["A4", "Letter"] as const) {
        const file = path.join(OUT, `${key}-${format.toLowerCase()}.pdf`);
        writeFileSync(file, await page.pdf({ format, printBackground: true }));
        expect(run("pdfinfo", [file])).toMatch(/^Pages:\s+1$/m);
        // the page as laid out (rows stay rows) and as running text (phrases stay whole)
        const text = run("pdftotext", ["-layout", file, "-"]);
        const flow = run("pdftotext", [file, "-"]).replace(/\s+/g, " ");
        expect(text).toContain(engine.name);
        expect(text).toMatch(/valve clearance worksheet/i);
        expect(text).toContain(`${engine.intake.min.toFixed(2)}–${engine.intake.max.toFixed(2)}`);
        expect(text).toContain(`${engine.exhaust.min.toFixed(2)}–${engine.exhaust.max.toFixed(2)}`);
        const series = engine.shims as { min: number; max: number; step: number };
        expect(flow).toContain(`${shim(series.min)} to ${shim(series.max)} mm in ${series.step} mm steps`);
        expect(text).toContain("23,456 km");
        // every valve on its own line: its shim, clearance and, where it changes, the new shim and its source
        const lines = text.split("\n");
        for (const r of readings) {
          const a = plan.assignments.find((x) => x.valveId === r.valve)!;
          // the table's row: the valve, then its shim (the diagram's cells put the name alone)
          const line = lines.find((l) => new RegExp(`^\\s*${r.valve.replace(".", "\\.")}\\s+\\d`).test(l));
          expect(line, `${r.valve} has a row`).toBeDefined();
          expect(line).toContain(r.measured.toFixed(2));
          expect(line).toContain(shim(r.installedMicrometer ?? r.installedStamp));
          if (a.source.kind !== "keep") {
            expect(line).toContain(shim(a.size));
            expect(line).toContain(
              a.source.kind === "valve"
                ? `from ${a.source.valveId}`
                : a.source.kind === "buy"
                  ? "buy"
                  : "from the tray",
            );
          } else expect(line).toContain("keep");
        }
        // where the shims sit, and (under the buckets) which cams come out, from the plan's changed
        // valves (common practice: the cam over a valve comes out to reach a shim under its bucket)
        if (key === "six") {
          expect(flow).toContain("Shims under the buckets");
          const changed = plan.assignments.filter((a) => a.source.kind !== "keep").map((a) => a.valveId);
          expect(flow).toContain(camsOutWords(camsOut({ shimPosition: "under", valves: changed })));
          expect(flow).toMatch(/Cams out: intake \(cylinders [\d, ]+\), exhaust \(cylinders [\d, ]+\)\./);
          expect(flow).toContain("Fit with the cams out");
          expect(flow).toContain("two full turns by hand");
        } else {
          expect(flow).toContain("Shims over the buckets · Cams stay in");
          expect(flow).toContain("bucket tool");
          expect(flow).not.toContain("Cams out:");
        }
        // the buy list, as counts and sizes
        for (const b of plan.buy) expect(text).toContain(`${b.count} × ${shim(b.size)}`);
        expect(plan.buy.length).toBeGreaterThan(0);
        // none of the app's controls reach the paper
        for (const word of [
          "Print worksheet",
          "Download CSV",
          "Copy as text",
          "Engines",
          "Prepare",
          "Sign out",
          "Ask the club",
        ])
          expect(text).not.toContain(word);
      }
      await ctx.close();
    });
  }
});
