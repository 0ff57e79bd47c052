import { describe, expect, it } from "vitest";
import { backOnline, baseUrl, signedInPhone } from "../support/browser";
import { clubScenario } from "../support/club-scenario";
import { waitForMail } from "../support/mail";
import { cameraJpeg } from "../support/photos";
import { browserPerFile } from "../support/per-file";

// Each test makes its own club, mentor, mechanic and checks (tests/support/club-scenario.ts): the
// demo data is shared with other files (the pool test borrows for the same check), so a verdict or
// a loan there could change what this file sees, depending on the order the files run in.
const browser = browserPerFile();

const esc = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

let stepNo = 0;
const step = (what: string) => console.log(`[review] ${++stepNo} ${what}`);

describe("a mentor reviews a shared check", () => {
  it("the mechanic shares a check with the club; it waits in the mentors' queue, and withdrawing takes it out", async () => {
    const t = await clubScenario(baseUrl(), "rv-share", [
      { name: "Share single", shared: false },
      { name: "Queue four", shared: true },
    ]);
    const { ctx: mechCtx, page: mech } = await signedInPhone(browser, t.mechanic);
    await mech.getByRole("link", { name: /Share single/ }).tap();
    await mech.getByRole("link", { name: /43,800 km/ }).tap();
    await mech.getByRole("button", { name: /3\. Plan/ }).tap();
    await mech.getByRole("button", { name: `Ask ${t.club.name} to review` }).tap();
    await mech.getByText(/waiting for a mentor/).waitFor({ timeout: 20_000 });
    step("shared by the mechanic");
    await waitForMail(t.mentor.email, /asks for a review: Share single/);

    const { ctx: mentorCtx, page: mentor } = await signedInPhone(browser, t.mentor);
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Share single/ }).waitFor();
    // withdrawn: gone from the queue
    await mech.getByRole("button", { name: "Withdraw" }).tap();
    await mech.getByRole("button", { name: `Ask ${t.club.name} to review` }).waitFor({ timeout: 20_000 });
    await mentor.reload();
    await mentor.getByRole("link", { name: /Queue four/ }).waitFor();
    // the phone's kept copy of the queue may show first; the server's answer replaces it
    await expect.poll(() => mentor.getByRole("link", { name: /Share single/ }).count(), { timeout: 15_000 }).toBe(0);
    await mentorCtx.close();
    await mechCtx.close();
  });

  it("the mentor comments on a valve and gives a verdict; the mechanic sees both", async () => {
    const t = await clubScenario(baseUrl(), "rv-verdict", [{ name: "Verdict four", shared: true }]);
    const { ctx: mentorCtx, page: mentor } = await signedInPhone(browser, t.mentor);
    step("signed in as mentor");
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Verdict four/ }).tap();
    await mentor.waitForURL(/\/review\?id=/);
    await mentor.getByText("read-only: you are reviewing", { exact: false }).waitFor();
    step("review open");
    // the readings show how each was found, and nothing offers to change them
    await expect(
      mentor
        .getByText(/2\.\d\d stamp · 0\.\d\d mm goes, 0\.\d\d mm does not/)
        .first()
        .isVisible(),
    ).resolves.toBe(true);
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
        throw new Error(
          `comment not shown; alerts: ${(await mentor.getByRole("alert").allInnerTexts()).join(" | ")}; ${String(e)}`,
        );
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
    await waitForMail(t.mechanic.email, new RegExp(`New comment from ${esc(t.mentor.name)}`));
    await waitForMail(t.mechanic.email, /Review verdict: measure again/);

    step("mails arrived");
    const { ctx: mechCtx, page: mech } = await signedInPhone(browser, t.mechanic);
    await mech.getByRole("link", { name: /Verdict four/ }).tap();
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
    const t = await clubScenario(baseUrl(), "rv-photo", [{ name: "Photo four", shared: true }]);
    const { ctx: mechCtx, page: mech } = await signedInPhone(browser, t.mechanic);
    await mech.getByRole("link", { name: /Photo four/ }).tap();
    await mech.getByRole("link", { name: /43,800 km/ }).tap();
    await mech.getByRole("button", { name: /2\. Measure/ }).tap();
    await mech.evaluate(async () => {
      await navigator.serviceWorker.ready;
      if (!navigator.serviceWorker.controller)
        await new Promise((r) => navigator.serviceWorker.addEventListener("controllerchange", r, { once: true }));
    });
    await mechCtx.setOffline(true);
    step("mechanic offline on the check");
    const card = mech.locator('[id="valve-I1.1"]');
    await card
      .getByLabel(/Add a photo of valve I1\.1/)
      .setInputFiles({ name: "blade-in-gap.jpg", mimeType: "image/jpeg", buffer: await cameraJpeg(1200, 900) });
    await card.getByText("waiting to send").waitFor();
    await expect(card.getByTestId("photo").count()).resolves.toBe(1);
    await mech.screenshot({ path: "test-results/photo-offline.png" });
    await backOnline(mechCtx, mech);
    await card.getByText("sent", { exact: true }).waitFor({ timeout: 20_000 });
    // where photos are added, the account's photo space: how much is used of how much
    await card.getByText(/Photo space: [\d.]+ (bytes|KB|MB) of 500 MB used/).waitFor();
    step("photo sent after the signal came back");
    await mechCtx.close();

    const { ctx: mentorCtx, page: mentor } = await signedInPhone(browser, t.mentor);
    await mentor.goto(`${baseUrl()}/club`);
    await mentor.getByRole("link", { name: /Photo four/ }).tap();
    const photo = mentor.getByRole("list", { name: "Photos: valve I1.1" }).getByTestId("photo");
    await photo.waitFor();
    // the image really loads: decoded at the size the server stored
    await expect
      .poll(() => photo.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth), { timeout: 10_000 })
      .toBe(1200);
    await mentor.screenshot({ path: "test-results/photo-mentor.png", fullPage: true });
    await mentorCtx.close();
  });
});
