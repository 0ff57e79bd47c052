import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { signedInClient, type Client } from "../support/api";
import { baseUrl, narrowPhone, signInAs } from "../support/browser";
import { addMembership, makeUser } from "../support/fixtures";
import { measuringOrder } from "@/lib/check/measuring";
import { waitForMail } from "../support/mail";
import { browserPerFile } from "../support/per-file";
import { pushAccepted } from "../support/push";
import { layout, USUAL_BANDS } from "../support/engines";

/**
 * The garage screens on small phones (360 and 390 px wide): the engine diagram for engines of 1 to
 * 16 cylinders, the measuring mode on a 24-valve inline six (taps counted), the engine's facing,
 * the mentor's links and the whole story of a check. All engines and readings are invented.
 */
const browser = browserPerFile();

const phone = (width: number) => narrowPhone(browser, { width, height: 800, colorScheme: "dark" });
const signIn = (page: Page, u: { email: string; password: string }) => signInAs(page, u.email, u.password);

const seq = (n: number) => Array.from({ length: n }, (_, i) => i + 1);

/** An engine of this layout with one check: in band, tight, loose and unmeasured valves in turn. */
async function engineWithCheck(
  api: Client,
  cylinders: number,
  intakes: number,
  exhausts: number,
  extra: Record<string, unknown> = {},
) {
  const engineId = crypto.randomUUID();
  const checkId = crypto.randomUUID();
  const readings: { name: string; args: unknown }[] = [];
  let n = 0;
  for (let c = 1; c <= cylinders; c++)
    for (const [kind, count] of [
      ["I", intakes],
      ["E", exhausts],
    ] as const)
      for (let i = 1; i <= count; i++) {
        const band = kind === "I" ? USUAL_BANDS.intake : USUAL_BANDS.exhaust;
        const state = n++ % 4;
        if (state === 3) continue;
        const measured = state === 0 ? (band.min + band.max) / 2 : state === 1 ? band.min - 0.05 : band.max + 0.1;
        readings.push({
          name: "reading.put/1",
          args: {
            checkId,
            reading: {
              valve: `${kind}${c}.${i}`,
              round: 0,
              installedStamp: 2.6,
              measured: Math.round(measured * 100) / 100,
              method: "typed",
            },
          },
        });
      }
  await pushAccepted(api, [
    {
      name: "engine.put/1",
      args: {
        id: engineId,
        name: `Layout ${cylinders}x${intakes + exhausts}`,
        cylinders,
        intakePerCylinder: intakes,
        exhaustPerCylinder: exhausts,
        firingOrder: seq(cylinders),
        ...USUAL_BANDS,
        ...extra,
      },
    },
    { name: "check.put/1", args: { id: checkId, engineId, odometer: 12_000, measuredHot: false, status: "measuring" } },
    ...readings,
  ]);
  return { engineId, checkId };
}

interface Box {
  left: number;
  right: number;
  top: number;
  bottom: number;
  width: number;
  height: number;
}

/** What the diagram and the page look like: overflow, and each cylinder's label and cells. */
function layoutOf(page: Page) {
  return page.evaluate(() => {
    const box = (e: Element): Box => {
      const r = e.getBoundingClientRect();
      return { left: r.left, right: r.right, top: r.top, bottom: r.bottom, width: r.width, height: r.height };
    };
    const groups = [
      ...document.querySelectorAll('figure[aria-label="Engine diagram"]:not(.ws-diagram) [data-cylinder]'),
    ].map((g) => ({
      cylinder: Number(g.getAttribute("data-cylinder")),
      label: box(g.querySelector("[data-cylinder-label]")!),
      cells: [...g.querySelectorAll("button[data-valve]")].map((b) => ({
        id: b.getAttribute("data-valve")!,
        name: b.getAttribute("aria-label") ?? "",
        text: (b as HTMLElement).innerText,
        box: box(b),
      })),
    }));
    return {
      overflow: document.documentElement.scrollWidth - window.innerWidth,
      innerWidth: window.innerWidth,
      groups,
    };
  });
}

function assertDiagram(l: Awaited<ReturnType<typeof layoutOf>>, cylinders: number, perCylinder: number) {
  expect(l.overflow).toBeLessThanOrEqual(0);
  expect(l.groups.map((g) => g.cylinder).sort((a, b) => a - b)).toEqual(seq(cylinders));
  const sizes = new Set<string>();
  for (const g of l.groups) {
    expect(g.cells).toHaveLength(perCylinder);
    for (const c of g.cells) {
      // each cell belongs to its group's cylinder, lies on screen, and its name starts with its visible text
      expect(Number(/^[IE](\d+)\./.exec(c.id)![1])).toBe(g.cylinder);
      expect(c.box.left).toBeGreaterThanOrEqual(0);
      expect(c.box.right).toBeLessThanOrEqual(l.innerWidth);
      expect(c.name.startsWith(c.id)).toBe(true);
      sizes.add(`${c.box.width.toFixed(1)}x${c.box.height.toFixed(1)}`);
    }
    // the label sits above its own cells, within their span
    const left = Math.min(...g.cells.map((c) => c.box.left));
    const right = Math.max(...g.cells.map((c) => c.box.right));
    const top = Math.min(...g.cells.map((c) => c.box.top));
    expect(g.label.left).toBeGreaterThanOrEqual(left - 0.5);
    expect(g.label.right).toBeLessThanOrEqual(right + 0.5);
    expect(g.label.bottom).toBeLessThanOrEqual(top + 0.5);
    // and no other cylinder's valve lies under it
    for (const o of l.groups)
      if (o !== g)
        for (const c of o.cells)
          expect(
            c.box.right <= g.label.left ||
              c.box.left >= g.label.right ||
              c.box.bottom <= g.label.top ||
              c.box.top >= g.label.bottom,
          ).toBe(true);
  }
  // one cell size whatever the state
  expect([...sizes]).toHaveLength(1);
}

describe("the engine diagram on a small phone", () => {
  it("never pans sideways and keeps each cylinder's label over its own valves, for 1 to 16 cylinders and 2 to 5 valves each", async () => {
    const u = await makeUser("layouts");
    const api = await signedInClient(baseUrl(), u);
    const layouts: [number, number, number][] = [
      [1, 1, 1],
      [1, 3, 2],
      [4, 2, 1],
      [6, 2, 2],
      [6, 3, 2],
      [16, 1, 1],
      [16, 2, 2],
      [16, 3, 2],
    ];
    const made = [];
    for (const [cyl, i, e] of layouts) made.push({ cyl, per: i + e, ...(await engineWithCheck(api, cyl, i, e)) });
    for (const width of [360, 390]) {
      const ctx = await phone(width);
      const page = await ctx.newPage();
      await signIn(page, u);
      for (const m of made) {
        for (const step of ["measure", "plan"]) {
          await page.goto(`${baseUrl()}/check?id=${m.checkId}&step=${step}`);
          await page
            .locator(`figure[aria-label="Engine diagram"]:not(.ws-diagram) [data-cylinder="${m.cyl}"]`)
            .waitFor({ timeout: 20_000 });
          assertDiagram(await layoutOf(page), m.cyl, m.per);
          if (width === 360 && step === "plan" && [1, 6, 16].includes(m.cyl) && m.per === (m.cyl === 1 ? 5 : 4)) {
            // the README's pictures: the diagram alone, without the fixed bar of places over it
            await page.addStyleTag({ content: 'nav[aria-label="Places"] { display: none !important; }' });
            await page
              .locator("figure")
              .first()
              .screenshot({ path: `test-results/diagram-${m.cyl}-cylinders.png` });
          }
        }
      }
      await ctx.close();
    }
  }, 300_000);
});

/** A blade button's value as the strip labels it (millimetres, two decimals). */
const bladeValue = (label: string) => Number(label);

describe("measuring a 24-valve engine on a 390 px phone", () => {
  // an invented inline six, four valves a cylinder, firing 1-5-3-6-2-4, every bucket given the same
  // shim at assembly, on a stand facing the other way
  const SIX = {
    ...layout([1, 5, 3, 6, 2, 4], 2),
    ...USUAL_BANDS,
    assembledShim: 2.75,
    mirrored: true,
  };

  async function sixWithCheck(api: Client) {
    const engineId = crypto.randomUUID();
    const checkId = crypto.randomUUID();
    await pushAccepted(api, [
      { name: "engine.put/1", args: { id: engineId, name: "Stand six", ...SIX } },
      {
        name: "check.put/1",
        args: { id: checkId, engineId, odometer: 41_000, measuredHot: false, status: "measuring" },
      },
    ]);
    return { engineId, checkId };
  }
  // the order the measuring mode must follow, from the rotation guide in lib/check/measuring
  const SIX_ORDER = measuringOrder({ ...SIX, firingAngles: null, timing: undefined }).stops.map((s) => s.valveId);

  /** A new user with the six and one check, signed in on a phone of this width. */
  async function sixOnPhone(tag: string, width: number) {
    const u = await makeUser(tag);
    const api = await signedInClient(baseUrl(), u);
    const ids = await sixWithCheck(api);
    const page = await (await phone(width)).newPage();
    await signIn(page, u);
    return { u, api, page, ...ids };
  }

  it("follows the rotation guide valve by valve: 24 readings and the installed shims in 26 taps", async () => {
    const { page, checkId } = await sixOnPhone("six", 390);
    // the page counts the clicks it receives from a real (trusted) tap, kept across the step change
    await page.addInitScript(() => {
      window.addEventListener(
        "click",
        (e) => {
          if (e.isTrusted) sessionStorage.setItem("taps", String(Number(sessionStorage.getItem("taps") ?? 0) + 1));
        },
        true,
      );
    });
    const received = () => page.evaluate(() => Number(sessionStorage.getItem("taps") ?? 0));
    await page.goto(`${baseUrl()}/check?id=${checkId}`);
    // the safety ticks come first, every check; they are not data entry, so they are counted apart
    let safety = 0;
    await page.getByRole("heading", { name: "Before you start" }).waitFor({ timeout: 20_000 });
    for (const box of await page.getByRole("checkbox").all()) {
      await box.tap();
      safety++;
    }
    await page.getByRole("button", { name: "Start measuring" }).tap();
    safety++;

    await page.evaluate(() => sessionStorage.setItem("taps", "0"));
    const tap = (l: ReturnType<Page["getByRole"]>) => l.tap();
    // one tap puts the assembly shim in every bucket
    await tap(page.getByRole("button", { name: "Fill all 24" }));
    await expect.poll(() => page.getByTestId("shim-I1.1").innerText()).toBe("2.75");

    const visited: string[] = [];
    const tight = new Set(["I3.2", "E6.1", "E2.2"]);
    for (let i = 0; i < 24; i++) {
      const strip = page.getByRole("group", { name: /^Feeler blades for / });
      const valve = (await strip.getAttribute("aria-label"))!.replace("Feeler blades for ", "");
      visited.push(valve);
      expect(valve).toBeTruthy();
      // the strip is centred on the valve's band: an in-band blade, and a tight one, need no scrolling
      const band = valve.startsWith("I") ? USUAL_BANDS.intake : USUAL_BANDS.exhaust;
      const labels = await strip.getByRole("button").allInnerTexts();
      const values = labels.map(bladeValue);
      expect(values.some((b) => b < band.min) && values.some((b) => b > band.max)).toBe(true);
      const want = tight.has(valve)
        ? values.filter((b) => b < band.min).at(-1)!
        : values.find((b) => b >= band.min + 0.02)!;
      await tap(strip.getByRole("button", { name: want.toFixed(2), exact: true }));
      await expect.poll(() => page.getByTestId("measured-count").innerText()).toBe(`${i + 1} of 24 valves measured`);
    }
    // the order is the rotation guide's (lib/check/measuring), each valve once
    expect(visited).toEqual(SIX_ORDER);
    const measureHeight = await page.evaluate(() => document.documentElement.scrollHeight);
    await page.screenshot({ path: "test-results/measure-six.png" });
    await tap(page.getByRole("button", { name: "All measured: see the shim plan" }));
    await page.waitForURL(/step=plan/);
    // three tight valves and nothing else to swap with: the plan buys thinner shims
    await page.getByRole("heading", { name: "Buy list" }).waitFor({ timeout: 20_000 });
    const taps = await received();
    console.log(
      `[garage-phone] 24 valves: ${taps} taps to enter (1 fill, 24 blades, 1 to the plan); ${safety} taps on the safety list before; the measure page ${measureHeight} px tall`,
    );
    // exactly what the page received: a screen that needed a confirming or a scrolling tap would show here
    expect(taps).toBe(26);
    await page.context().close();
  }, 180_000);

  it("a wrong tap is undone, a reading cleared, and Enter saves a typed value", async () => {
    const { page, checkId } = await sixOnPhone("undo", 360);
    await page.goto(`${baseUrl()}/check?id=${checkId}&step=measure`);
    const first = SIX_ORDER as [string, string, ...string[]];
    const strip = page.getByRole("group", { name: /^Feeler blades for / });
    await strip.getByRole("button", { name: "0.15", exact: true }).tap();
    await expect.poll(() => strip.getAttribute("aria-label")).toBe(`Feeler blades for ${first[1]}`);
    // undo: the first valve is unmeasured again and is the one on screen
    await page.getByRole("button", { name: "Undo last" }).tap();
    await expect.poll(() => strip.getAttribute("aria-label")).toBe(`Feeler blades for ${first[0]}`);
    await expect.poll(() => page.getByTestId("measured-count").innerText()).toBe("0 of 24 valves measured");
    expect(await page.getByTestId(`result-${first[0]}`).innerText()).toMatch(/not measured yet/);
    // Enter in the typed box saves and moves on
    await page.getByRole("button", { name: "Type a value instead" }).tap();
    await page.getByLabel(`Typed clearance of ${first[0]} in mm`).fill("0.17");
    await page.getByLabel(`Typed clearance of ${first[0]} in mm`).press("Enter");
    await expect.poll(() => page.getByTestId("measured-count").innerText()).toBe("1 of 24 valves measured");
    await expect.poll(() => strip.getAttribute("aria-label")).toBe(`Feeler blades for ${first[1]}`);
    // clearing: pick the valve on the diagram, clear its reading
    await page.getByRole("button", { name: new RegExp(`^${first[0].replace(".", "\\.")} `) }).tap();
    expect(await page.getByTestId(`result-${first[0]}`).innerText()).toMatch(/0\.17 mm \(typed\)/);
    await page.getByRole("button", { name: "Clear this reading" }).tap();
    await expect.poll(() => page.getByTestId("measured-count").innerText()).toBe("0 of 24 valves measured");
    await expect.poll(() => page.getByTestId(`result-${first[0]}`).innerText()).toMatch(/not measured yet/);
    await page.context().close();
  }, 120_000);

  it("the facing is part of the engine: turned on one phone, the other phone draws it the same way", async () => {
    const { u, api, engineId, checkId, page: a } = await sixOnPhone("facing", 390);
    await a.goto(`${baseUrl()}/check?id=${checkId}&step=measure`);
    await a.locator("figure [data-cylinder]").first().waitFor();
    expect((await layoutOf(a)).groups.map((g) => g.cylinder)).toEqual([6, 5, 4, 3, 2, 1]);
    await a.getByRole("button", { name: "Turn the picture: cylinder 1 on the left" }).tap();
    await expect.poll(async () => (await layoutOf(a)).groups.map((g) => g.cylinder)).toEqual([1, 2, 3, 4, 5, 6]);
    // saved with the engine and sent with the next sync
    await expect
      .poll(async () => (await api.get(`/api/engines/${engineId}`)).json.engine?.mirrored, { timeout: 30_000 })
      .toBe(false);

    const b = await (await phone(360)).newPage();
    await signIn(b, u);
    await b.goto(`${baseUrl()}/check?id=${checkId}&step=measure`);
    await b.locator("figure [data-cylinder]").first().waitFor({ timeout: 20_000 });
    const l = await layoutOf(b);
    expect(l.groups.map((g) => g.cylinder)).toEqual([1, 2, 3, 4, 5, 6]);
    // valves inside a cylinder follow the facing too: intake 1 before intake 2
    expect(l.groups[0]!.cells.map((c) => c.id)).toEqual(["I1.1", "I1.2", "E1.1", "E1.2"]);
    assertDiagram(l, 6, 4);
    // and back again on phone B: mirrored inside each cylinder as well
    await b.getByRole("button", { name: "Engine faces the other way? Put cylinder 1 on the right" }).tap();
    await expect.poll(async () => (await layoutOf(b)).groups.map((g) => g.cylinder)).toEqual([6, 5, 4, 3, 2, 1]);
    expect((await layoutOf(b)).groups.at(-1)!.cells.map((c) => c.id)).toEqual(["I1.2", "I1.1", "E1.2", "E1.1"]);
    await expect
      .poll(async () => (await api.get(`/api/engines/${engineId}`)).json.engine?.mirrored, { timeout: 30_000 })
      .toBe(true);
    await a.context().close();
    await b.context().close();
  }, 180_000);
});

describe("a mentor's links and the whole story of a check", () => {
  it("the review notice opens the review; the mentor sees every round, both shim figures and the facing; closing over 'measure again' asks first", async () => {
    const owner = await makeUser("owner");
    const mentor = await makeUser("mentor");
    const api = await signedInClient(baseUrl(), owner);
    const club = (await api.post("/api/clubs", { name: `Stand club ${owner.id.slice(0, 6)}` })).json.club as {
      id: string;
    };
    await addMembership(club.id, mentor.id, ["mentor", "mechanic"]);
    const engineId = crypto.randomUUID();
    const checkId = crypto.randomUUID();
    const r = (valve: string, round: number, fields: Record<string, unknown>) => ({
      name: "reading.put/1",
      args: { checkId, reading: { valve, round, method: "feeler", ...fields } },
    });
    await pushAccepted(api, [
      {
        name: "engine.put/1",
        args: {
          id: engineId,
          name: "Mirror twin",
          ...layout([1, 2], 2),
          firingAngles: [0, 360],
          ...USUAL_BANDS,
          mirrored: true,
        },
      },
      {
        name: "check.put/1",
        args: { id: checkId, engineId, odometer: 30_500, measuredHot: false, status: "verifying" },
      },
      // a 2.80 stamp measured at 2.78: tight, a 2.70 fitted, then re-measured in band
      r("I1.1", 0, {
        installedStamp: 2.8,
        installedMicrometer: 2.78,
        feelerGo: 0.05,
        feelerNoGo: 0.06,
        measured: 0.05,
        fittedShim: 2.7,
      }),
      r("I1.1", 1, { installedStamp: 2.7, feelerGo: 0.13, feelerNoGo: 0.15, measured: 0.13 }),
      ...["I1.2", "I2.1", "I2.2"].map((v) =>
        r(v, 0, { installedStamp: 2.6, feelerGo: 0.15, feelerNoGo: 0.18, measured: 0.15 }),
      ),
      ...["E1.1", "E1.2", "E2.1", "E2.2"].map((v) =>
        r(v, 0, { installedStamp: 2.6, feelerGo: 0.25, feelerNoGo: 0.28, measured: 0.25 }),
      ),
    ]);
    expect((await api.post(`/api/checks/${checkId}/shares`, { clubId: club.id })).status).toBe(201);
    const mail = await waitForMail(mentor.email, /asks for a review: Mirror twin/);
    const link = /(https?:\/\/\S+)/.exec(mail.text)![1]!;
    expect(new URL(link).pathname).toBe("/review");
    expect(new URL(link).searchParams.get("id")).toBe(checkId);

    const mctx = await phone(360);
    const m = await mctx.newPage();
    await signIn(m, mentor);
    // an old notice that named the check page still finds its way to the review
    await m.goto(`${baseUrl()}/check?id=${checkId}`);
    await m.getByRole("link", { name: "Open it as a club review" }).tap();
    await m.waitForURL(/\/review\?id=/);
    await m.goto(`${baseUrl()}${new URL(link).pathname}${new URL(link).search}`);
    await m.getByText("read-only: you are reviewing").waitFor();
    const story = await m.getByTestId("rounds-I1.1").innerText();
    expect(story).toMatch(
      /First reading\s+2\.80 stamp, 2\.780 micrometer · 0\.05 mm goes, 0\.06 mm does not · then fitted 2\.70/,
    );
    expect(story).toMatch(/Re-check 1\s+2\.70 stamp · 0\.13 mm goes, 0\.15 mm does not/);
    const l = await layoutOf(m);
    expect(l.groups.map((g) => g.cylinder)).toEqual([2, 1]);
    assertDiagram(l, 2, 4);
    await m.screenshot({ path: "test-results/review-rounds.png", fullPage: true });
    await m.getByRole("button", { name: /Measure again/ }).tap();
    await m.getByTestId("verdict").getByText("↻ Measure again").waitFor();
    // the verdict leaves the mentor's outbox with the next sync
    await expect
      .poll(
        async () =>
          ((await api.get(`/api/checks/${checkId}/shares`)).json.items as { verdict: string | null }[])[0]?.verdict,
        { timeout: 30_000 },
      )
      .toBe("measure-again");
    await mctx.close();

    const verdictMail = await waitForMail(owner.email, /Review verdict: measure again/, 30_000);
    const back = new URL(/(https?:\/\/\S+)/.exec(verdictMail.text)![1]!);
    expect(`${back.pathname}${back.search}${back.hash}`).toBe(`/review?id=${checkId}#verdict`);

    const octx = await phone(390);
    const o = await octx.newPage();
    await signIn(o, owner);
    await o.goto(`${baseUrl()}/check?id=${checkId}&step=verify`);
    await o.getByRole("button", { name: /Close the check/ }).tap();
    await o
      .getByRole("alertdialog")
      .getByText(/verdict on this check is “↻ Measure again”/)
      .waitFor({ timeout: 20_000 });
    await o.getByRole("button", { name: "Keep it open" }).tap();
    await o.getByRole("button", { name: /Close the check/ }).waitFor();
    expect(o.url()).toContain("/check?id=");
    await octx.close();
  });
});
