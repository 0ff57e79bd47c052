import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { AxeBuilder } from "@axe-core/playwright";
import { signedInClient } from "../support/api";
import { baseUrl, signedInPhone } from "../support/browser";
import { addMembership, ENGINE_FOUR, makeUser } from "../support/fixtures";
import { browserPerFile } from "../support/per-file";

/**
 * Deleting the account from the account page on a small phone (360 px): it says first what goes,
 * what ends and what stays; a blocker (the only admin of a club) is named and offers no button; the
 * password is asked; a wrong one deletes nothing; afterwards the phone's own copy is gone too.
 */
const browser = browserPerFile();

const overflows = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth > window.innerWidth);
/** axe-core on the deletion's section (the rest of the page is audited by a11y.test.ts), WCAG 2.1 A/AA and best practice. */
const axe = async (page: Page) =>
  (
    await new AxeBuilder({ page })
      .include('section[aria-labelledby="delete-heading"]')
      .withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"])
      .analyze()
  ).violations.map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(" ")).join(", ")}`);
const localDatabases = (page: Page) =>
  page.evaluate(async () => (await indexedDB.databases()).map((d) => d.name ?? ""));

describe("deleting the account on a phone", () => {
  it("shows what will happen, refuses while a club needs it, and then deletes everything on the server and the phone", async () => {
    const [u, other] = await Promise.all([makeUser("e2e-delete"), makeUser("e2e-delete-other")]);
    const pc = await signedInClient(baseUrl(), u);
    const clubId = (await pc.post("/api/clubs", { name: "Thursday Garage Club" })).json.club.id as string;
    await addMembership(clubId, other.id, ["mechanic"]);
    const engineId = (await pc.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    await pc.post(`/api/engines/${engineId}/checks`, { odometer: 31_000 });
    await pc.post("/api/tray", { size: 2.6, count: 2 });

    const { ctx, page } = await signedInPhone(browser, u, { colorScheme: "light" });
    await page.goto(`${baseUrl()}/account`);
    await page.getByRole("button", { name: "Delete my account…" }).tap();
    await page.getByRole("heading", { name: "What deleting does" }).waitFor();
    await page.getByText("1 engine, 1 check and 0 readings").waitFor();
    await page.getByText("membership of Thursday Garage Club").waitFor();
    await page.getByText(/You are the only admin of Thursday Garage Club/).waitFor();
    expect(await page.getByLabel("Your password, to confirm").count()).toBe(0);
    expect(await overflows(page)).toBe(false);
    expect(await axe(page)).toEqual([]);
    await page.screenshot({ path: "test-results/account-delete-blocked.png", fullPage: true });

    // another member takes over as admin; the screen asked again now offers the deletion
    await addMembership(clubId, other.id, ["admin"]);
    await page.getByRole("button", { name: "Keep my account" }).tap();
    await page.getByRole("button", { name: "Delete my account…" }).tap();
    const password = page.getByLabel("Your password, to confirm");
    await password.waitFor();
    await page
      .getByText(/comments you write on other members' checks would stay, shown as from “a former member”/)
      .waitFor();
    expect(await overflows(page)).toBe(false);
    expect(await axe(page)).toEqual([]);
    await page.screenshot({ path: "test-results/account-delete-confirm.png", fullPage: true });
    await page.emulateMedia({ colorScheme: "dark" });
    expect(await axe(page)).toEqual([]);
    await page.screenshot({ path: "test-results/account-delete-confirm-dark.png", fullPage: true });
    await page.emulateMedia({ colorScheme: "light" });

    await password.fill("not-my-password");
    await page.getByRole("button", { name: "Delete the account for good" }).tap();
    await page.getByText("That is not this account's password: nothing was deleted").waitFor();
    expect((await pc.get("/api/account")).status).toBe(200);
    expect(await localDatabases(page)).toContain(`lashwright-${u.id}`);

    await password.fill(u.password);
    await page.getByRole("button", { name: "Delete the account for good" }).tap();
    await page.waitForURL("**/account-deleted");
    await page.getByRole("heading", { name: "Your account is deleted" }).waitFor();
    expect(await overflows(page)).toBe(false);
    await page.screenshot({ path: "test-results/account-delete-done.png", fullPage: true });
    expect(await localDatabases(page)).not.toContain(`lashwright-${u.id}`);
    // the computer still signed in is told its session ended
    const after = await pc.get("/api/account");
    expect(after.status).toBe(401);
    expect(after.json.error.code).toBe("session_revoked");
    await ctx.close();
  });
});
