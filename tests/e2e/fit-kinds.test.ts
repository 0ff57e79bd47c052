import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";
import { signedInClient } from "../support/api";
import { baseUrl, launch, signedInPhone } from "../support/browser";
import { makeUser } from "../support/fixtures";
import { OVER_BUCKET_CAUTIONS, OVER_BUCKET_METHOD, prepareCautions, UNDER_BUCKET_FIT } from "@/lib/check/shim-position";
import { layout, USUAL_BANDS } from "../support/engines";

/**
 * A fit on each kind of shim-and-bucket valve train, on a 390 px phone, with long engine names. The
 * trade rules asserted (docs/trade.md "Where the shim sits", common practice; from memory): under the
 * bucket, the cams come out and go back in time, step by step with cautions, and the re-check asks
 * for two crank turns by hand and the marks checked before its first reading; over the bucket, the
 * cams stay in and each shim comes out with the bucket tool, notch, number face down and magnet.
 * Engines, bands and readings are invented test data.
 */
let browser: Browser;
let page: Page;
const made: Record<"under" | "over", { engineId: string; checkId: string; name: string }> = {} as never;

const UNDER = {
  name: "Long-named inline four with its shims under the buckets, garage bay two",
  ...layout([1, 3, 4, 2], 2),
  ...USUAL_BANDS,
  shimPosition: "under",
};
const OVER = {
  name: "Long-named two-valve inline four with its shims over the buckets, on the bench",
  ...layout([1, 3, 4, 2], 1),
  ...USUAL_BANDS,
  shimPosition: "over",
};

/** Every valve at 2.60 and in band, but for the ones named (a clearance out of band). */
function readings(valves: string[], out: Record<string, number>) {
  return valves.map((valve) => {
    const measured = out[valve] ?? (valve.startsWith("I") ? 0.15 : 0.25);
    return { valve, installedStamp: 2.6, feelerGo: measured, measured, method: "feeler" };
  });
}

beforeAll(async () => {
  const u = await makeUser("kinds");
  const api = await signedInClient(baseUrl(), u);
  const fourValves = [1, 2, 3, 4].flatMap((c) => [`I${c}.1`, `I${c}.2`, `E${c}.1`, `E${c}.2`]);
  const twoValves = [1, 2, 3, 4].flatMap((c) => [`I${c}.1`, `E${c}.1`]);
  // under: I1.1 tight (0.05) and E3.2 loose (0.40): the intake cam and the exhaust cam come out
  // over: I2.1 tight and E4.1 loose: every cam stays in
  for (const [kind, e, rs] of [
    ["under", UNDER, readings(fourValves, { "I1.1": 0.05, "E3.2": 0.4 })],
    ["over", OVER, readings(twoValves, { "I2.1": 0.05, "E4.1": 0.4 })],
  ] as const) {
    const engine = (await api.post("/api/engines", e)).json.engine;
    expect(engine.shimPosition).toBe(kind);
    const checkId = (await api.post(`/api/engines/${engine.id}/checks`, { odometer: 31_400 })).json.check.id as string;
    expect((await api.put(`/api/checks/${checkId}/readings`, { readings: rs })).status).toBe(200);
    made[kind] = { engineId: engine.id, checkId, name: e.name };
  }
  browser = await launch();
  ({ page } = await signedInPhone(browser, u, { width: 390, height: 844, colorScheme: "dark" }));
  await page.getByText(UNDER.name).waitFor({ timeout: 20_000 });
});
afterAll(() => browser?.close());

const textOf = async (testId: string) => ((await page.getByTestId(testId).innerText()) ?? "").replace(/\s+/g, " ");

/** Nothing wider than the screen: a long name or caution wraps instead of pushing the page sideways. */
async function fitsTheScreen() {
  const wide = await page.evaluate(() => document.documentElement.scrollWidth);
  expect(wide).toBeLessThanOrEqual(390);
}

/** Prepare's ticks are the list for this kind of engine (docs/trade.md cautions to show: common practice). */
async function prepareShows(kind: "under" | "over") {
  await page.goto(`${baseUrl()}/check?id=${made[kind].checkId}&step=prepare`);
  await page.getByRole("heading", { name: "Before you start" }).waitFor({ timeout: 20_000 });
  const boxes = await page.getByRole("checkbox").allInnerTexts();
  expect(boxes.map((b) => b.replace(/[☐☑]/g, "").trim())).toEqual(prepareCautions(kind));
  await fitsTheScreen();
  await page.screenshot({ path: `test-results/fit-kinds-${kind}-prepare.png`, fullPage: true });
}

describe("a fit with the shims under the buckets (390 px)", () => {
  it("the engine says it, Prepare asks for the cam-cap order, the torque wrench and the marks", async () => {
    await page.goto(`${baseUrl()}/engine?id=${made.under.engineId}`);
    await expect(textOf("engine-shim-position")).resolves.toBe("under the buckets");
    await prepareShows("under");
    const all = (await page.getByRole("checkbox").allInnerTexts()).join(" | ");
    expect(all).toMatch(/cam-cap order and torque figures/);
    expect(all).not.toMatch(/bucket tool/);
  });

  it("the plan says which cams come out before fitting starts, and the worksheet and the mentor's view say it too", async () => {
    await page.goto(`${baseUrl()}/check?id=${made.under.checkId}&step=plan`);
    // I1.1 is an intake on cylinder 1, E3.2 an exhaust on cylinder 3 (common practice: the cam over the valve comes out)
    await expect
      .poll(() => textOf("plan-cams-out"), { timeout: 20_000 })
      .toContain("Cams out: intake (cylinder 1), exhaust (cylinder 3).");
    await expect(page.getByTestId("ws-position").textContent()).resolves.toBe(
      "Shims under the buckets · Cams out: intake (cylinder 1), exhaust (cylinder 3).",
    );
    await page.screenshot({ path: "test-results/fit-kinds-under-plan.png", fullPage: true });
    await page.goto(`${baseUrl()}/review?id=${made.under.checkId}`);
    await expect
      .poll(() => textOf("review-shim-position"), { timeout: 20_000 })
      .toBe("Shims under the buckets · Cams out: intake (cylinder 1), exhaust (cylinder 3).");
  });

  it("Fit runs the cams-out sequence as ticks, each with its cautions beside it, the swap list at its middle", async () => {
    await page.goto(`${baseUrl()}/check?id=${made.under.checkId}&step=plan`);
    await page.getByRole("button", { name: /Fit the 2 changes/ }).tap();
    await page.getByRole("heading", { name: "Fit with the cams out" }).waitFor();
    await expect(textOf("cams-out")).resolves.toBe("Cams out: intake (cylinder 1), exhaust (cylinder 3).");
    // the steps in the trade's order (common practice; from memory), each with its cautions
    const expected = [
      [/timing position the manual gives/, ["The manual's figures and order govern."]],
      [/Mark the cam chain \(or belt\) and the sprockets/, ["A valve can hit a piston if the timing is wrong."]],
      [
        /loosen the cam caps evenly, a little at a time, in the manual's order/,
        ["The manual's figures and order govern.", "Never turn the engine with a cam cap loose."],
      ],
      [/Swap the shims with the swap list/, ["Never turn the engine with a cam cap loose."]],
      [/refit the cams with the marks aligned/, ["A valve can hit a piston if the timing is wrong."]],
      [
        /torque them evenly to the manual's figure/,
        ["The manual's figures and order govern.", "Never turn the engine with a cam cap loose."],
      ],
      [
        /two full turns by hand and check the marks line up again before re-measuring/,
        ["A valve can hit a piston if the timing is wrong."],
      ],
    ] as const;
    expect(UNDER_BUCKET_FIT).toHaveLength(expected.length);
    for (const [n, [task, cautions]] of expected.entries()) {
      const key = UNDER_BUCKET_FIT[n]!.key;
      const item = await textOf(`task-${key}`);
      expect(item).toMatch(new RegExp(`${n + 1}\\.`));
      expect(item).toMatch(task);
      const shown = await page
        .getByRole("list", { name: `Cautions for step ${n + 1}` })
        .getByRole("listitem")
        .allInnerTexts();
      for (const c of cautions) expect(shown.map((s) => s.replace(/^⚠\s*Caution:\s*/, ""))).toContain(c);
    }
    const button = page.getByRole("button", { name: /to continue|Re-measure/ });
    // the swaps alone do not finish an under-bucket fit
    const swaps = await page.getByRole("list", { name: "Swaps" }).getByRole("checkbox").all();
    expect(swaps.length).toBe(2); // one tick per valve: its shim out to the tray and a bought one in
    for (const s of swaps) {
      await s.tap();
      await expect.poll(() => s.getAttribute("aria-checked")).toBe("true");
    }
    await expect(button.innerText()).resolves.toBe("Tick every step and swap to continue");
    await expect(button.isDisabled()).resolves.toBe(true);
    for (const t of UNDER_BUCKET_FIT.filter((x) => x.key !== "swap")) {
      const box = page.getByTestId(`task-${t.key}`).getByRole("checkbox");
      await box.tap();
      await expect.poll(() => box.getAttribute("aria-checked")).toBe("true");
    }
    await fitsTheScreen();
    await page.screenshot({ path: "test-results/fit-kinds-under-fit.png", fullPage: true });
    await expect(button.isDisabled()).resolves.toBe(false);
  });

  it("a reload keeps the ticks; the re-check asks for the two-turn check before its first reading", async () => {
    await page.reload();
    await page.getByRole("heading", { name: "Fit with the cams out" }).waitFor();
    await expect
      .poll(() => page.getByTestId("task-turn").getByRole("checkbox").getAttribute("aria-checked"))
      .toBe("true");
    await page.getByRole("button", { name: "Re-measure the changed valves" }).tap();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
    const turn = page
      .getByTestId("recheck-turn")
      .getByRole("checkbox", { name: /two full turns by hand, and the timing marks line up again/ });
    await turn.waitFor();
    await expect(page.getByTestId("recheck-turn").innerText()).resolves.toMatch(
      /Caution: A valve can hit a piston if the timing is wrong/,
    );
    // no valve to measure until it is ticked
    await expect(page.getByRole("article").count()).resolves.toBe(0);
    await page.screenshot({ path: "test-results/fit-kinds-under-recheck-ask.png", fullPage: true });
    await turn.tap();
    await expect.poll(() => page.getByRole("article").count()).toBe(2);
    // I1.1 with the bought 2.50: 2.65 - 2.50 = 0.15 (gap = shim + clearance, common practice)
    await page
      .getByRole("group", { name: "Feeler blades for I1.1" })
      .getByRole("button", { name: "0.15", exact: true })
      .tap();
    // a reading is in: the two-turn tick has done its work and leaves the screen
    await expect.poll(() => page.getByTestId("recheck-turn").count()).toBe(0);
    await fitsTheScreen();
    await page.screenshot({ path: "test-results/fit-kinds-under-recheck.png", fullPage: true });
  });
});

describe("a fit with the shims over the buckets (390 px)", () => {
  it("the engine says it and Prepare asks for the bucket tool, not the cam caps", async () => {
    await page.goto(`${baseUrl()}/engine?id=${made.over.engineId}`);
    await expect.poll(() => textOf("engine-shim-position"), { timeout: 20_000 }).toBe("over the buckets");
    await prepareShows("over");
    const all = (await page.getByRole("checkbox").allInnerTexts()).join(" | ");
    expect(all).toMatch(/bucket tool/);
    expect(all).not.toMatch(/cam-cap|Mark the cam chain/i);
  });

  it("the plan keeps the cams in; Fit gives the method for each valve with its cautions, and the swaps alone finish it", async () => {
    await page.goto(`${baseUrl()}/check?id=${made.over.checkId}&step=plan`);
    await expect.poll(() => textOf("plan-cams-out"), { timeout: 20_000 }).toContain("Cams stay in");
    await expect(page.getByTestId("ws-position").textContent()).resolves.toMatch(
      /^Shims over the buckets · Cams stay in/,
    );
    await page.getByRole("button", { name: /Fit the 2 changes/ }).tap();
    await page.getByRole("heading", { name: "Swap list, in working order" }).waitFor();
    const method = await textOf("over-method");
    // the bucket tool, the notch, the number face down, a magnet (common practice; from memory)
    for (const m of [/bucket tool/, /notch sits where the shim can be lifted/, /number face down/, /magnet/])
      expect(method).toMatch(m);
    for (const m of OVER_BUCKET_METHOD) expect(method).toContain(m);
    for (const c of OVER_BUCKET_CAUTIONS) expect(method).toContain(`Caution: ${c}`);
    await expect(page.getByText("Fit with the cams out").count()).resolves.toBe(0);
    await expect(page.getByText(/Cams out:/).count()).resolves.toBe(0);
    const swaps = await page.getByRole("list", { name: "Swaps" }).getByRole("checkbox").all();
    expect(swaps.length).toBe(2); // one tick per changed valve
    // the only checkboxes are the swaps: no cams-out steps over the bucket
    await expect(page.getByRole("checkbox").count()).resolves.toBe(swaps.length);
    for (const s of swaps) {
      await s.tap();
      await expect.poll(() => s.getAttribute("aria-checked")).toBe("true");
    }
    await fitsTheScreen();
    await page.screenshot({ path: "test-results/fit-kinds-over-fit.png", fullPage: true });
    await page.getByRole("button", { name: "Re-measure the changed valves" }).tap();
    await page.getByRole("heading", { name: /Measure the changed valves again/ }).waitFor();
    // no two-turn check over the bucket: the valves to measure are there at once
    await expect.poll(() => page.getByRole("article").count()).toBe(2);
    await expect(page.getByTestId("recheck-turn").count()).resolves.toBe(0);
  });
});
