import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { baseUrl, launch, phoneContext, signInAs as signIn } from "../support/browser";
import { waitForMail } from "../support/mail";
import { cameraJpeg } from "../support/photos";

// The demo scenario (db/seed.ts): Mara's latest check of the four is shared with the club.
let browser: Browser;
beforeAll(async () => {
  browser = await launch();
});
afterAll(() => browser?.close());


let stepNo = 0;
const step = (what: string) => console.log(`[review] ${++stepNo} ${what}`);

describe("a mentor reviews a shared check", () => {
  it("the mechanic shares a check with the club; it waits in the mentors' queue, and withdrawing takes it out", async () => {
    const mechCtx = await phoneContext(browser);
    const mech = await mechCtx.newPage();
    await signIn(mech, "mara@kestrel-hollow.example");
    await mech.getByRole("link", { name: /Green single/ }).tap();
    await mech.getByRole("link", { name: /19,400 km/ }).tap();
    await mech.getByRole("button", { name: /3\. Plan/ }).tap();
    await mech.getByRole("button", { name: "Ask Kestrel Hollow Motor Club to review" }).tap();
    await mech.getByText(/waiting for a mentor/).waitFor({ timeout: 20_000 });
    step("shared by the mechanic");
    await waitForMail("teodor@kestrel-hollow.example", /asks for a review: Green single/);

    const mentorCtx = await phoneContext(browser);
    const mentor = await mentorCtx.newPage();
    await signIn(mentor, "teodor@kestrel-hollow.example");
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Green single/ }).waitFor();
    // withdrawn: gone from the queue
    await mech.getByRole("button", { name: "Withdraw" }).tap();
    await mech.getByRole("button", { name: "Ask Kestrel Hollow Motor Club to review" }).waitFor({ timeout: 20_000 });
    await mentor.reload();
    await mentor.getByRole("link", { name: /Blue four/ }).waitFor();
    // the phone's kept copy of the queue may show first; the server's answer replaces it
    await expect.poll(() => mentor.getByRole("link", { name: /Green single/ }).count(), { timeout: 15_000 }).toBe(0);
    await mentorCtx.close();
    await mechCtx.close();
  });

  it("the mentor comments on a valve and gives a verdict; the mechanic sees both", async () => {
    const mentorCtx = await phoneContext(browser);
    const mentor = await mentorCtx.newPage();
    await signIn(mentor, "teodor@kestrel-hollow.example");
    step("signed in as mentor");
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Blue four/ }).tap();
    await mentor.waitForURL(/\/review\?id=/);
    await mentor.getByText("read-only: you are reviewing", { exact: false }).waitFor();
    step("review open");
    // the readings show how each was found, and nothing offers to change them
    await expect(mentor.getByText(/2\.\d\d stamp · 0\.\d\d mm goes, 0\.\d\d mm does not/).first().isVisible()).resolves.toBe(true);
    await expect(mentor.getByRole("group", { name: /Feeler blades/ }).count()).resolves.toBe(0);
    // type into the comment box as the keyboard would (React reads the input event)
    await mentor.getByLabel("Add a comment").evaluate((el, text) => {
      const set = Object.getOwnPropertyDescriptor(HTMLTextAreaElement.prototype, "value")!.set!;
      set.call(el, text);
      el.dispatchEvent(new Event("input", { bubbles: true }));
    }, "Re-measure E3.1 with the 0.13 and 0.15 blades before ordering.");
    await mentor.getByLabel("About").selectOption("E3.1");
    await mentor.getByRole("button", { name: "Post comment" }).tap();
    await mentor
      .getByText("Re-measure E3.1 with the 0.13")
      .waitFor({ timeout: 15_000 })
      .catch(async (e: unknown) => {
        await mentor.screenshot({ path: "test-results/review-failure.png", fullPage: true });
        throw new Error(`comment not shown; alerts: ${(await mentor.getByRole("alert").allInnerTexts()).join(" | ")}; ${String(e)}`);
      });
    step("comment posted");
    await mentor.getByRole("button", { name: /Measure again/ }).tap();
    await mentor.getByTestId("verdict").getByText("↻ Measure again").waitFor();
    // sent: nothing of the mentor's waits on the phone any more
    await mentor.getByTestId("verdict").getByText("waiting to send").waitFor({ state: "detached", timeout: 20_000 });
    await mentor.getByText("waiting to send").first().waitFor({ state: "detached", timeout: 20_000 });
    await mentor.screenshot({ path: "test-results/review-mentor.png", fullPage: true });
    await mentorCtx.close();
    step("verdict given");

    // the notices reach the mechanic through the queue and the mail catcher
    await waitForMail("mara@kestrel-hollow.example", /New comment from Teodor/);
    await waitForMail("mara@kestrel-hollow.example", /Review verdict: measure again/);

    step("mails arrived");
    const mechCtx = await phoneContext(browser);
    const mech = await mechCtx.newPage();
    await signIn(mech, "mara@kestrel-hollow.example");
    await mech.getByRole("link", { name: /Blue four/ }).tap();
    await mech.getByRole("link", { name: /43,800 km/ }).tap();
    await mech.getByRole("button", { name: /3\. Plan/ }).tap();
    await mech.getByRole("heading", { name: "Club review" }).waitFor();
    await mech.getByText("↻ Measure again").waitFor();
    await mech.getByRole("link", { name: "Comments and verdict" }).tap();
    await mech.getByText("Re-measure E3.1 with the 0.13").waitFor();
    await expect(mech.getByRole("button", { name: /Fine to close up/ }).count()).resolves.toBe(0);
    await mechCtx.close();
  });

  it("a photo taken with no signal waits on the phone and reaches the mentor after sync", async () => {
    const mechCtx = await phoneContext(browser);
    const mech = await mechCtx.newPage();
    await signIn(mech, "mara@kestrel-hollow.example");
    await mech.getByRole("link", { name: /Blue four/ }).tap();
    await mech.getByRole("link", { name: /43,800 km/ }).tap();
    await mech.getByRole("button", { name: /2\. Measure/ }).tap();
    await mech.evaluate(async () => {
      await navigator.serviceWorker.ready;
      if (!navigator.serviceWorker.controller) await new Promise((r) => navigator.serviceWorker.addEventListener("controllerchange", r, { once: true }));
    });
    await mechCtx.setOffline(true);
    step("mechanic offline on the check");
    const card = mech.locator('[id="valve-I1.1"]');
    await card.getByLabel(/Add a photo of valve I1\.1/).setInputFiles({ name: "blade-in-gap.jpg", mimeType: "image/jpeg", buffer: await cameraJpeg(1200, 900) });
    await card.getByText("waiting to send").waitFor();
    await expect(card.getByTestId("photo").count()).resolves.toBe(1);
    await mech.screenshot({ path: "test-results/photo-offline.png" });
    await mechCtx.setOffline(false);
    await mech.evaluate(() => window.dispatchEvent(new Event("online")));
    await card.getByText("sent", { exact: true }).waitFor({ timeout: 20_000 });
    // where photos are added, the account's photo space: how much is used of how much
    await card.getByText(/Photo space: [\d.]+ (bytes|KB|MB) of 500 MB used/).waitFor();
    step("photo sent after the signal came back");
    await mechCtx.close();

    const mentorCtx = await phoneContext(browser);
    const mentor = await mentorCtx.newPage();
    await signIn(mentor, "teodor@kestrel-hollow.example");
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Blue four/ }).tap();
    const photo = mentor.getByRole("list", { name: "Photos: valve I1.1" }).getByTestId("photo");
    await photo.waitFor();
    // the image really loads: decoded at the size the server stored
    await expect.poll(() => photo.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth), { timeout: 10_000 }).toBe(1200);
    await mentor.screenshot({ path: "test-results/photo-mentor.png", fullPage: true });
    await mentorCtx.close();
  });
});
