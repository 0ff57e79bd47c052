import { describe, expect, it } from "vitest";
import { baseUrl, phoneContext } from "../support/browser";
import { inbox, mailApi, waitForMail } from "../support/mail";
import { browserPerFile } from "../support/per-file";

const browser = browserPerFile();

describe("a newcomer's first ten minutes", () => {
  it("from the home page to a first saved engine: sign up, ask for the mail again, click the link in the mail (which signs in), add an engine", async () => {
    const email = `newcomer-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const password = "rocker-cover-gasket-7";
    const ctx = await phoneContext(browser, "light");
    // the browser refuses to keep the data for good, as many do for a site not on the home screen
    await ctx.addInitScript(() => {
      navigator.storage.persist = async () => false;
      navigator.storage.persisted = async () => false;
    });
    const page = await ctx.newPage();

    // a visitor's clear first step leads to sign-up, not to a sign-in form
    await page.goto(baseUrl());
    await page.getByRole("link", { name: "Create an account to start" }).tap();
    await page.waitForURL("**/sign-up");
    await page.getByLabel("Your name").fill("Nell Newcomer");
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill(password);
    await page.getByRole("button", { name: "Create account" }).tap();
    // the address the mail went to is named, with a way to have it sent again
    await page.getByText(`We sent a link to ${email}`).waitFor();
    await waitForMail(email, /Confirm your e-mail/);

    // signing in before confirming says so and offers the mail again
    await page.goto(`${baseUrl()}/sign-in`);
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill(password);
    await page.getByRole("button", { name: "Sign in", exact: true }).tap();
    await page.getByText(/Confirm your e-mail first/).waitFor();
    await page.getByRole("button", { name: "Send the link again" }).tap();
    await page.getByText(`Sent again to ${email}`).waitFor();
    await expect
      .poll(async () => (await inbox(email)).filter((m) => /Confirm your e-mail/.test(m.subject)).length, {
        timeout: 15_000,
      })
      .toBe(2);

    // the mail is HTML with a real link beside its plain text: open it as a mail client shows it and click
    const mail = await waitForMail(email, /Confirm your e-mail/);
    expect(mail.text).toMatch(/\/verify\?token=/);
    expect(mail.html).toMatch(/<a [^>]*href="http:\/\/127\.0\.0\.1:\d+\/verify\?token=/);
    await page.goto(`${mailApi()}/api/email/${mail.id}/html`);
    await page.getByRole("link", { name: /\/verify\?token=/ }).tap();
    await page.waitForURL(/\/verify\?token=/);
    // the link alone confirms nothing: the password chosen at sign-up goes with it
    await page.getByRole("heading", { level: 1, name: "Confirm your address" }).waitFor();
    await page.getByRole("button", { name: "Confirm" }).tap();
    await page.getByText(/missing: the one you chose/).waitFor();
    await page.getByLabel("Password").fill(password);
    // confirming signs the newcomer in with the password just proved: no empty sign-in form after it
    await page.getByRole("button", { name: "Confirm" }).tap();
    await page.waitForURL("**/engines");
    await page.getByText("No engines on this phone yet").waitFor();
    await page.getByRole("link", { name: /Add an engine/ }).tap();
    await page.waitForURL("**/engine/edit");
    await page.getByLabel("Start from a layout").selectOption({ label: "Single, two valves, 0.025 mm series" });
    await page.getByLabel("Name", { exact: true }).fill("Nell's single");
    // an empty band says what is missing and where the figure comes from
    await page.getByRole("button", { name: "Save engine" }).tap();
    const intakeFrom = page.getByLabel("Intake from (mm)");
    await expect(intakeFrom.getAttribute("aria-invalid")).resolves.toBe("true");
    const described = (await intakeFrom.getAttribute("aria-describedby")) ?? "";
    const explanation = await page.evaluate(
      (ids) =>
        ids
          .split(" ")
          .map((id) => document.getElementById(id)?.textContent ?? "")
          .join(" "),
      described,
    );
    expect(explanation).toMatch(/missing/i);
    expect(explanation).toMatch(/service manual/i);
    await intakeFrom.fill("0.10");
    await page.getByLabel("Intake to (mm)").fill("0.15");
    await page.getByLabel("Exhaust from (mm)").fill("0.15");
    await page.getByLabel("Exhaust to (mm)").fill("0.20");
    await page.getByRole("button", { name: "Save engine" }).tap();
    await page.waitForURL(/\/engine\?id=/);
    await page.getByRole("heading", { name: "Nell's single" }).waitFor();
    await page.getByText("All synced").waitFor({ timeout: 20_000 });
    await page.screenshot({ path: "test-results/newcomer-first-engine.png", fullPage: true });

    // the storage notice: said apart from the sync line, with what to do, until put away
    const notice = page.getByTestId("storage-notice");
    await expect(notice.innerText()).resolves.toMatch(/home screen/);
    await expect(page.getByTestId("sync-line").innerText()).resolves.not.toMatch(/clear/);
    await notice.getByRole("button", { name: /Got it/ }).tap();
    await notice.waitFor({ state: "detached" });
    await page.getByRole("link", { name: /Checks/ }).tap();
    await page.waitForURL("**/checks");
    await page.reload();
    await page.getByText(/No checks yet/).waitFor();
    await expect(page.getByTestId("storage-notice").count()).resolves.toBe(0);
    await ctx.close();
  });
});
