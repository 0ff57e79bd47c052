import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";
import { baseUrl, launch, signedInPhone } from "../support/browser";
import { signedInClient } from "../support/api";
import { rawConnection } from "../support/db";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";

/**
 * Bringing in past checks from a CSV file on the engine page, as a mechanic with a typed-up paper
 * log would: a file with bad rows shows each row's reason and adds nothing; a sound file shows its
 * checks, adds them on one tap, and they reach the server through the sync with their own days.
 */
let browser: Browser;
let page: Page;
let engineId = "";

// An invented log (test data): three checks of two valves, dates written day first.
const GOOD = [
  "Date,Odometer,Valve,Shim (mm),Clearance (mm),Notes",
  "14/03/2022,10000,E1.1,2.60,0.27,first check",
  "14/03/2022,10000,I1.1,2.60,0.15,",
  "20/03/2023,20000,E1.1,2.60,0.23,",
  "20/03/2023,20000,I1.1,2.60,0.15,",
  "02/04/2024,30500,E1.1,2.60,0.20,",
  "02/04/2024,30500,I1.1,2.60,0.14,",
].join("\r\n");
const BAD = [
  "date,odometer,valve,shim_mm,clearance_mm",
  "2022-03-14,10000,E1.1,2.60,0.27",
  "2022-03-14,10000,I9.1,2.60,0.15",
  "2022-02-30,20000,E1.1,2.60,0.23",
].join("\n");

beforeAll(async () => {
  const u = await makeUser("import");
  const api = await signedInClient(baseUrl(), u);
  engineId = (await api.post("/api/engines", ENGINE_FOUR)).json.engine.id;
  browser = await launch();
  ({ page } = await signedInPhone(browser, u, "light"));
  await page.goto(`${baseUrl()}/engine?id=${engineId}`);
  await page.getByRole("heading", { name: ENGINE_FOUR.name }).waitFor();
});

afterAll(async () => {
  await browser?.close();
});

const choose = (name: string, text: string) =>
  page.getByLabel("Choose a CSV file").setInputFiles({ name, mimeType: "text/csv", buffer: Buffer.from(text) });

async function serverChecks() {
  const db = await rawConnection();
  const [rows] = await db.query(
    "SELECT c.odometer, DATE_FORMAT(c.started_at, '%Y-%m-%d %H:%i') AS started, c.status, c.notes, COUNT(r.id) AS readings FROM checks c LEFT JOIN readings r ON r.check_id = c.id WHERE c.engine_id = ? GROUP BY c.id ORDER BY c.started_at",
    [engineId],
  );
  await db.end();
  return rows as { odometer: string; started: string; status: string; notes: string | null; readings: number }[];
}

describe("past checks from a CSV file", () => {
  it("shows each bad row's reason and adds nothing", async () => {
    await choose("log-with-mistakes.csv", BAD);
    const problems = page.getByTestId("import-problems");
    await expect.poll(() => problems.innerText()).toContain("Row 3: Test four has no valve I9.1");
    expect(await problems.innerText()).toContain('Row 4: date "2022-02-30" is not in the calendar');
    expect(await page.getByRole("button", { name: /Add \d+ past check/ }).count()).toBe(0);
    await page.getByText("Nothing is added while the file has a problem").waitFor();
    expect(await page.getByText("No checks yet.").count()).toBe(1);
    await page.screenshot({ path: "test-results/import-refused.png", fullPage: true });
  });

  it("previews a sound file, adds its checks on one tap, and the server gets them with their days", async () => {
    await choose("paper-log.csv", GOOD);
    const preview = page.getByTestId("import-preview");
    await preview.getByText("3 checks, 6 readings").waitFor();
    // 14/03/2022 has a day above 12, so the file itself says the day comes first
    expect(await preview.innerText()).toContain("2022-03-14 · 10,000 km · 2 valves · “first check”");
    await page.screenshot({ path: "test-results/import-preview.png", fullPage: true });
    await page.getByRole("button", { name: "Add 3 past checks" }).tap();
    await page.getByText(/Added 3 past checks \(6 readings\) from paper-log\.csv/).waitFor();
    await page.getByText("14/03/2022 · closed").waitFor();
    await page.getByRole("heading", { name: "History and drift" }).waitFor();
    await expect.poll(serverChecks, { timeout: 30_000 }).toEqual([
      { odometer: "10000.0", started: "2022-03-14 12:00", status: "closed", notes: "first check", readings: 2 },
      { odometer: "20000.0", started: "2023-03-20 12:00", status: "closed", notes: null, readings: 2 },
      { odometer: "30500.0", started: "2024-04-02 12:00", status: "closed", notes: null, readings: 2 },
    ]);
  });

  it("refuses the same file a second time, so nothing is doubled", async () => {
    await choose("paper-log.csv", GOOD);
    const problems = page.getByTestId("import-problems");
    await expect
      .poll(() => problems.innerText())
      .toContain("Row 2: a check on 2022-03-14 at 10,000 is already on this engine");
    expect(await page.getByRole("button", { name: /Add \d+ past check/ }).count()).toBe(0);
    expect(await serverChecks()).toHaveLength(3);
  });
});
