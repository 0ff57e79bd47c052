import { readFileSync } from "node:fs";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import type { Locator, Page } from "playwright-core";
import { drawnValveOrder } from "@/lib/check/diagram";
import { valveNames } from "@/lib/lash";
import { signedInClient, type Client } from "../support/api";
import { baseUrl, signedInPhone } from "../support/browser";
import { addMembership, makeUser } from "../support/fixtures";
import { waitForMail } from "../support/mail";
import { browserPerFile } from "../support/per-file";
import { pushAccepted } from "../support/push";
import { layout, USUAL_BANDS } from "../support/engines";

/**
 * Paper that matches the phone, on a 360 px phone in light and dark: the printed worksheet, the
 * phone's diagram and the review draw a mirrored inline six in one valve order (I1.2 left of I1.1),
 * for both facings and with either side nearest the mechanic; a typed 0.075 mm shows as 0.075 on the
 * card, the plan, the review, the worksheet and the CSV; and the smaller words: a card heading kept
 * whole, the re-check's double tick said where it shows, the import's unitless columns named, a
 * loan read from the lender's side, an offer lent out, an invitation that says what it did.
 * Engines and readings are invented test data.
 */
const browser = browserPerFile();

const SIX = { name: "Bench six", ...layout([1, 5, 3, 6, 2, 4], 2), ...USUAL_BANDS };
const TWIN = { name: "Bench twin", ...layout([1, 2], 1), ...USUAL_BANDS };
const sixViews = valveNames(SIX).map((valve) => ({ valve }));

const engineArgs = (id: string, e: typeof SIX, extra: object) => ({
  id,
  ...e,
  measuredHot: false,
  displayUnit: "mm",
  odometerUnit: "km",
  firingAngles: null,
  shimDiameter: null,
  assembledShim: null,
  ...extra,
});

/** The six, mirrored, planned: I1.1 typed as 0.075 mm (tight), every other valve in band by its blades. */
async function plannedSix(api: Client) {
  const engineId = crypto.randomUUID();
  const checkId = crypto.randomUUID();
  const reading = (valve: string) => {
    if (valve === "I1.1") return { valve, round: 0, installedStamp: 2.6, measured: 0.075, method: "typed" };
    const [go, noGo] = valve.startsWith("I") ? [0.15, 0.18] : [0.25, 0.28];
    return { valve, round: 0, installedStamp: 2.6, feelerGo: go, feelerNoGo: noGo, measured: go, method: "feeler" };
  };
  await pushAccepted(api, [
    {
      name: "engine.put/3",
      args: engineArgs(engineId, SIX, { mirrored: true, shimPosition: "under", nearSide: "exhaust" }),
    },
    { name: "check.put/1", args: { id: checkId, engineId, odometer: 23_456, status: "planned" } },
    ...sixViews.map((v) => ({ name: "reading.put/1", args: { checkId, reading: reading(v.valve.id) } })),
  ]);
  return { engineId, checkId };
}

/** The twin at its re-check: I1.1 had a new shim and now reads in band (verified); E1.1 waits. */
async function recheckTwin(api: Client) {
  const engineId = crypto.randomUUID();
  const checkId = crypto.randomUUID();
  const r = (valve: string, round: number, extra: object) => ({
    name: "reading.put/1",
    args: { checkId, reading: { valve, round, installedStamp: 2.6, ...extra } },
  });
  await pushAccepted(api, [
    {
      name: "engine.put/3",
      args: engineArgs(engineId, TWIN, { mirrored: false, shimPosition: "over", nearSide: "exhaust" }),
    },
    { name: "check.put/1", args: { id: checkId, engineId, odometer: 9_000, status: "verifying" } },
    r("I1.1", 0, { feelerGo: 0.3, feelerNoGo: 0.33, measured: 0.3, fittedShim: 2.75 }),
    r("I1.1", 1, { installedStamp: 2.75, feelerGo: 0.15, feelerNoGo: 0.18, measured: 0.15 }),
    r("E1.1", 0, { feelerGo: 0.4, feelerNoGo: 0.45, measured: 0.4, fittedShim: 2.75 }),
    r("I2.1", 0, { feelerGo: 0.15, feelerNoGo: 0.18, measured: 0.15 }),
    r("E2.1", 0, { feelerGo: 0.25, feelerNoGo: 0.28, measured: 0.25 }),
  ]);
  return { engineId, checkId };
}

/** The valves as a drawing shows them: each cylinder's group in order, its top row, then its bottom row. */
async function drawn(root: Locator) {
  return root.evaluate((el) => {
    const rows = (side: string) =>
      [...el.querySelectorAll(`[data-row="${side}"] [data-valve]`)].map((c) => (c as HTMLElement).dataset.valve!);
    return { top: rows("top"), bottom: rows("bottom") };
  });
}

const phoneDiagram = (page: Page) => page.locator("main figure[aria-label='Engine diagram']").first();
const paperDiagram = (page: Page) => page.locator("article.worksheet .ws-diagram");

/** How many lines an element's text takes (one rectangle per line box). */
const lines = (l: Locator) =>
  l.evaluate((el) => {
    const r = document.createRange();
    r.selectNodeContents(el);
    return new Set([...r.getClientRects()].filter((x) => x.width > 0).map((x) => Math.round(x.top))).size;
  });

async function compareDrawings(
  page: Page,
  api: Client,
  six: { engineId: string; checkId: string },
  facing: { mirrored: boolean; nearSide: "intake" | "exhaust" },
  shot: string,
) {
  const { checkId } = six;
  const want = drawnValveOrder(sixViews, facing);
  // the review reads the engine from the server: wait until the phone's change has reached it
  await expect
    .poll(async () => (await api.get(`/api/engines/${six.engineId}`)).json.engine, { timeout: 30_000 })
    .toMatchObject(facing);
  await page.goto(`${baseUrl()}/check?id=${checkId}&step=plan`);
  await page.getByTestId("plan-I1.1").waitFor({ timeout: 20_000 });
  await expect.poll(() => drawn(phoneDiagram(page)), { timeout: 10_000 }).toEqual(want);
  await page.locator("article.worksheet").waitFor({ state: "attached" });
  expect(await drawn(paperDiagram(page))).toEqual(want);
  await page.screenshot({ path: `test-results/${shot}-phone.png` });
  // the review's kept copy of the check (components/sync/persist-queries, idb-keyval's store) counts
  // as fresh for 30 s: it is dropped, so the review reads the engine as the server now has it
  await page.evaluate(
    () =>
      new Promise<void>((done, fail) => {
        const open = indexedDB.open("keyval-store");
        open.onerror = () => fail(open.error);
        // as idb-keyval makes it, should the page not have made it yet
        open.onupgradeneeded = () => open.result.createObjectStore("keyval");
        open.onsuccess = () => {
          const db = open.result;
          if (!db.objectStoreNames.contains("keyval")) return (db.close(), done());
          const tx = db.transaction("keyval", "readwrite");
          tx.objectStore("keyval").clear();
          tx.oncomplete = () => (db.close(), done());
          tx.onerror = () => fail(tx.error);
        };
      }),
  );
  await page.goto(`${baseUrl()}/review?id=${checkId}`);
  await page.getByTestId("rounds-I1.1").waitFor({ timeout: 20_000 });
  await expect.poll(() => drawn(phoneDiagram(page)), { timeout: 20_000 }).toEqual(want);
  await page.screenshot({ path: `test-results/${shot}-review.png` });
  return want;
}

describe("paper that matches the phone, numbers as they were given (360 px)", () => {
  for (const scheme of ["light", "dark"] as const)
    it(`draws one valve order everywhere and shows 0.075 as 0.075 (${scheme})`, async () => {
      const u = await makeUser(`paper-${scheme}`);
      const api = await signedInClient(baseUrl(), u);
      const six = await plannedSix(api);
      const twin = await recheckTwin(api);
      const { ctx, page } = await signedInPhone(browser, u, { colorScheme: scheme, acceptDownloads: true });
      const drawings = (facing: Parameters<typeof compareDrawings>[3], shot: string) =>
        compareDrawings(page, api, six, facing, `${shot}-${scheme}`);

      // mirrored, the exhausts nearest: the phone, the paper and the review agree, I1.2 left of I1.1
      const mirrored = await drawings({ mirrored: true, nearSide: "exhaust" }, "paper-mirrored");
      expect(mirrored.top.slice(-2)).toEqual(["I1.2", "I1.1"]);
      expect(mirrored.bottom.slice(-2)).toEqual(["E1.2", "E1.1"]);

      // the typed 0.075 on the review, as typed
      await expect(page.getByTestId("rounds-I1.1").innerText()).resolves.toContain("0.075 mm typed");
      await expect(page.getByTestId("plan-I1.1").innerText()).resolves.toContain("0.075 mm");

      // the plan and the worksheet: 0.075, never 0.08; the plan worked by hand: 2.60 + 0.075 - 0.15
      // (the band's middle) = 2.525, nearest in the 0.05 mm series 2.50, which gives 0.175
      await page.goto(`${baseUrl()}/check?id=${six.checkId}&step=plan`);
      const planRow = page.getByTestId("plan-I1.1");
      await expect(planRow.innerText({ timeout: 20_000 })).resolves.toMatch(/0\.075 mm/);
      await expect(planRow.innerText()).resolves.not.toMatch(/0\.08 mm/);
      await expect(page.getByTestId("plan-changes").innerText()).resolves.toBe("I1.1: 2.60 to 2.50, buy");
      const paperRow = page.locator("article.worksheet tr[data-valve='I1.1']");
      await expect(paperRow.innerText()).resolves.toContain("0.075");
      await expect(paperRow.innerText()).resolves.not.toContain("0.08");
      // the CSV, as the phone writes it
      const [download] = await Promise.all([
        page.waitForEvent("download"),
        page.getByRole("button", { name: "Download CSV" }).tap(),
      ]);
      const rows = Papa.parse<Record<string, string>>(readFileSync((await download.path())!, "utf8").trim(), {
        header: true,
      }).data;
      expect(rows.find((r) => r.valve === "I1.1")!.clearance_mm).toBe("0.075");
      await page.screenshot({ path: `test-results/paper-plan-${scheme}.png`, fullPage: true });
      await page.emulateMedia({ media: "print" });
      await page.screenshot({ path: `test-results/paper-worksheet-${scheme}.png`, fullPage: true });
      await page.emulateMedia({ media: "screen" });

      // the card: the typed value as typed; its heading and its band each on one line at 360 px
      await page.goto(`${baseUrl()}/check?id=${six.checkId}&step=measure`);
      await phoneDiagram(page)
        .getByRole("button", { name: /^I1\.1 / })
        .tap();
      const card = page.locator("article[data-valve='I1.1']");
      await card.getByText("0.075 mm (typed)").waitFor({ timeout: 20_000 });
      expect(await lines(card.locator("h3"))).toBe(1);
      expect(await lines(card.locator("header span"))).toBe(1);
      await card.screenshot({ path: `test-results/paper-card-${scheme}.png` });

      // facing the usual way: the three drawings turn together
      await page.goto(`${baseUrl()}/check?id=${six.checkId}&step=plan`);
      await page.getByRole("button", { name: "Turn the picture: cylinder 1 on the left" }).tap();
      await expect
        .poll(() => drawn(phoneDiagram(page)), { timeout: 10_000 })
        .toEqual(drawnValveOrder(sixViews, { mirrored: false, nearSide: "exhaust" }));
      const left = await drawings({ mirrored: false, nearSide: "exhaust" }, "paper-left");
      expect(left.top.slice(0, 2)).toEqual(["I1.1", "I1.2"]);

      // the profile says the intake side is nearest: the intakes are drawn at the bottom everywhere
      await page.goto(`${baseUrl()}/engine/edit?id=${six.engineId}`);
      await page.getByLabel("Intake side nearest me").check();
      await page.getByRole("button", { name: "Save engine" }).tap();
      await page.waitForURL(/\/engine\?id=/);
      await expect(page.getByTestId("engine-facing").innerText()).resolves.toBe(
        "cylinder 1 on the left, intake side nearest you",
      );
      // a band's length and its unit stay on one line
      for (const s of await page.locator("dd span.whitespace-nowrap").all()) expect(await lines(s)).toBe(1);
      const near = await drawings({ mirrored: false, nearSide: "intake" }, "paper-intake-near");
      expect(near.bottom.every((v) => v.startsWith("I"))).toBe(true);
      await page.goto(`${baseUrl()}/check?id=${six.checkId}&step=plan`);
      await page.locator("article.worksheet").waitFor({ state: "attached" });
      await expect(paperDiagram(page).locator("p").last().innerText()).resolves.toBe("Intake side, nearest you");

      // the re-check says what its double tick means on the card that shows it
      await page.goto(`${baseUrl()}/check?id=${twin.checkId}&step=verify`);
      const verified = page.locator("article[data-valve='I1.1']");
      await verified.getByText("✓✓ verified: in band again after the new shim").waitFor({ timeout: 20_000 });
      await page.screenshot({ path: `test-results/paper-recheck-${scheme}.png`, fullPage: true });

      // the import's note names this file's columns that have no unit
      await page.goto(`${baseUrl()}/engine?id=${twin.engineId}`);
      await page.getByLabel("Choose a CSV file").setInputFiles({
        name: "old-log.csv",
        mimeType: "text/csv",
        buffer: Buffer.from("date,odometer,valve,shim,clearance\n2022-03-14,1000,I1.1,2.60,0.15\n"),
      });
      const preview = page.getByTestId("import-preview");
      await expect(preview.innerText({ timeout: 20_000 })).resolves.toContain(
        'The columns "shim", "clearance" have no unit in their names',
      );
      await expect(preview.innerText()).resolves.not.toContain("shim_mm");
      await page.screenshot({ path: `test-results/paper-import-${scheme}.png`, fullPage: true });
      await ctx.close();
    }, 240_000);

  for (const scheme of ["light", "dark"] as const)
    it(`a lender reads a loan from their side, an offer lent out says so, an invitation says what it did (${scheme})`, async () => {
      const [lender, borrower] = await Promise.all([makeUser(`lend-${scheme}`), makeUser(`borrow-${scheme}`)]);
      const [l, b] = await Promise.all([signedInClient(baseUrl(), lender), signedInClient(baseUrl(), borrower)]);
      const clubId = (await l.post("/api/clubs", { name: `Loan club ${scheme}` })).json.club.id as string;
      await addMembership(clubId, borrower.id, ["mechanic"]);
      await l.post("/api/tray", { size: 2.55, count: 1 });
      const offer = (await l.post(`/api/clubs/${clubId}/pool`, { size: 2.55, count: 1, note: "blue drawer" })).json
        .offer;
      const loanId = (await b.post("/api/borrows", { offerId: offer.id, count: 1 })).json.borrow.id as string;
      // the borrower's club invites the lender to a second club
      const nightId = (await b.post("/api/clubs", { name: `Tappet Night ${scheme}` })).json.club.id as string;
      expect((await b.post(`/api/clubs/${nightId}/invites`, { email: lender.email, role: "mechanic" })).status).toBe(
        201,
      );
      const token = decodeURIComponent(
        /\/invite\?token=([A-Za-z0-9_%-]+)/.exec((await waitForMail(lender.email, /invites you/)).text)![1]!,
      );

      const { ctx, page } = await signedInPhone(browser, lender, { colorScheme: scheme });
      await page.goto(`${baseUrl()}/club`);
      const loan = page.getByTestId(`loan-${loanId}`);
      await loan.getByText("asks you for them: agree or decline").waitFor({ timeout: 20_000 });
      await expect(loan.innerText()).resolves.not.toMatch(/waiting for the lender/);
      // the one shim on offer is asked for: said in words, not "0 × 2.55 mm"
      await expect(page.getByTestId(`offer-${offer.id}`).innerText()).resolves.toBe(
        "2.55 mm: all lent out or asked for",
      );
      await expect(page.getByTestId("pool-offers").innerText()).resolves.not.toMatch(/\b0 ×/);
      await page.screenshot({ path: `test-results/pool-lender-asked-${scheme}.png`, fullPage: true });
      expect((await l.put(`/api/borrows/${loanId}`, { move: "agree" })).status).toBe(200);
      expect((await l.put(`/api/borrows/${loanId}`, { move: "hand-over" })).status).toBe(200);
      // handed over, nothing is left on offer: the offer is no longer listed
      await page.reload();
      await loan.getByText("on loan").waitFor({ timeout: 20_000 });
      await expect(page.getByTestId(`offer-${offer.id}`).count()).resolves.toBe(0);

      // the invitation link: joined, and the page says which club
      await page.goto(`${baseUrl()}/invite?token=${encodeURIComponent(token)}`);
      await expect(page.getByTestId("joined").innerText({ timeout: 20_000 })).resolves.toBe(
        `You joined Tappet Night ${scheme}`,
      );
      await page.screenshot({ path: `test-results/invite-joined-${scheme}.png` });
      await ctx.close();
    }, 120_000);
});
