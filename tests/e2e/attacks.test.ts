import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { allSynced, baseUrl, DEMO_PASSWORD, phoneContext, signedInPhone } from "../support/browser";
import { inbox, linkToken, waitForMail } from "../support/mail";
import { browserPerFile } from "../support/per-file";

/**
 * The attacks of issue 15 that need a real browser. OWASP ASVS 5.0 V3 Web Frontend Security
 * (redirects), V7 Session Management (login forgery, sign-out). Demo users from db/seed.ts.
 */
const browser = browserPerFile();

async function fillSignIn(page: Page, email: string) {
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in", exact: true }).tap();
}

async function signInLink(email: string) {
  const before = (await inbox(email)).length;
  const res = await fetch(`${baseUrl()}/api/account/sign-in-link`, {
    method: "POST",
    headers: { "content-type": "application/json", origin: baseUrl() },
    body: JSON.stringify({ email }),
  });
  expect(res.status).toBe(202);
  // this request's own mail, not an earlier one to the same address
  for (let i = 0; i < 75 && (await inbox(email)).length <= before; i++) await new Promise((r) => setTimeout(r, 200));
  return `${baseUrl()}/sign-in/link?token=${encodeURIComponent(linkToken(await waitForMail(email, /sign-in link/), "/sign-in/link"))}`;
}

describe("open redirect after sign-in", () => {
  it("next=/\\evil.example lands on our own engines, and next=/check?id=... keeps its query string", async () => {
    const ctx = await phoneContext(browser);
    const page = await ctx.newPage();
    await page.goto(`${baseUrl()}/sign-in?next=${encodeURIComponent("/\\evil.example/steal")}`);
    await fillSignIn(page, "mara@kestrel-hollow.example");
    await page.waitForURL("**/engines");
    expect(new URL(page.url()).origin).toBe(baseUrl());
    await ctx.close();

    // signed out on /check?id=X, the sign-in button comes back to the same check
    const ctx2 = await phoneContext(browser);
    const page2 = await ctx2.newPage();
    const id = crypto.randomUUID();
    await page2.goto(`${baseUrl()}/check?id=${id}`);
    await page2.getByRole("link", { name: "Sign in" }).tap();
    await page2.waitForURL("**/sign-in?next=*");
    await fillSignIn(page2, "mara@kestrel-hollow.example");
    await page2.waitForURL(`**/check?id=${id}`);
    await ctx2.close();
  });
});

describe("login forgery through a sign-in link", () => {
  it("the link page names the account and waits for a press; with someone else signed in it refuses", async () => {
    const { ctx, page } = await signedInPhone(browser, { email: "mara@kestrel-hollow.example" });
    // a link for another account, opened on Mara's phone: refused until she signs out
    await page.goto(await signInLink("teodor@kestrel-hollow.example"));
    await page
      .getByText(
        /This phone is signed in as mara@kestrel-hollow\.example, and the link is for teodor@kestrel-hollow\.example/,
      )
      .waitFor();
    await page.screenshot({ path: "test-results/sign-in-link-refused.png" });
    await page.goto(`${baseUrl()}/engines`);
    await page.getByRole("button", { name: /Sign out Mara/ }).waitFor();
    await ctx.close();

    // on a phone with nobody signed in, nothing happens before the press on the named button
    const ctx2 = await phoneContext(browser);
    const page2 = await ctx2.newPage();
    await page2.goto(await signInLink("teodor@kestrel-hollow.example"));
    const button = page2.getByRole("button", { name: "Sign in as teodor@kestrel-hollow.example" });
    await button.waitFor();
    const session = await page2.evaluate(() => fetch("/api/auth/session").then((r) => r.json()));
    expect(session).toEqual({});
    await page2.screenshot({ path: "test-results/sign-in-link-named.png" });
    await button.tap();
    await page2.waitForURL("**/engines");
    await page2.getByRole("button", { name: /Sign out Teodor/ }).waitFor();
    await ctx2.close();
  });
});

describe("signing out on a shared phone", () => {
  it("warns while changes wait, then leaves none of the user's data on the phone", async () => {
    const { ctx, page } = await signedInPhone(browser, { email: "mara@kestrel-hollow.example" });
    // the phone stores who is signed in once the server has answered
    await page.waitForFunction(() => localStorage.getItem("lashwright.user") !== null);
    const userId = await page.evaluate(
      () => (JSON.parse(localStorage.getItem("lashwright.user")!) as { id: string }).id,
    );
    // the club page's answers are kept on the phone (the copies other members' shared checks live in)
    await page.getByRole("link", { name: /Club/ }).tap();
    await page
      .getByText(/Kestrel Hollow/)
      .first()
      .waitFor();
    const stores = () =>
      page.evaluate(async (id) => {
        const names = (await indexedDB.databases()).map((d) => d.name);
        const kept = await new Promise<boolean>((resolve) => {
          const open = indexedDB.open("keyval-store");
          open.onsuccess = () => {
            const db = open.result;
            if (!db.objectStoreNames.contains("keyval")) return resolve(false);
            const get = db.transaction("keyval").objectStore("keyval").getKey(`lashwright-cache-${id}`);
            get.onsuccess = () => resolve(get.result !== undefined);
            get.onerror = () => resolve(false);
          };
          open.onerror = () => resolve(false);
        });
        return {
          local: names.includes(`lashwright-${id}`),
          kept,
          identity: localStorage.getItem("lashwright.user") !== null,
        };
      }, userId);
    await expect.poll(stores, { timeout: 10_000 }).toEqual({ local: true, kept: true, identity: true });

    // the first pull done before the signal goes, or the tray may not be on the phone yet (the stores
    // above exist from the first moment; their rows come with the pull)
    await allSynced(page);
    // a change that cannot reach the server: signing out first says so, and "cancel" keeps everything
    await page.route("**/api/sync/**", (r) => r.abort());
    await page.getByRole("link", { name: /Tray/ }).tap();
    await page
      .getByRole("button", { name: /^One more/ })
      .first()
      .tap();
    await page.getByText(/1 change waiting/).waitFor();
    const dismissed = new Promise<string>((resolve) =>
      page.once("dialog", (d) => (resolve(d.message()), void d.dismiss())),
    );
    await page.getByRole("button", { name: /Sign out Mara/ }).tap();
    expect(await dismissed).toMatch(/1 change on this phone is not on the server yet/);
    expect(await stores()).toEqual({ local: true, kept: true, identity: true });

    page.once("dialog", (d) => void d.accept());
    await page.getByRole("button", { name: /Sign out Mara/ }).tap();
    await page.waitForURL(`${baseUrl()}/`);
    await expect.poll(stores, { timeout: 10_000 }).toEqual({ local: false, kept: false, identity: false });
    await ctx.close();
  });
});
