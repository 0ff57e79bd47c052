import { describe, expect, it } from "vitest";
import { baseUrl, signedInPhone } from "../support/browser";
import { clubScenario, offerSpares } from "../support/club-scenario";
import { waitForMail } from "../support/mail";
import { browserPerFile } from "../support/per-file";

// A club of this test's own (tests/support/club-scenario.ts): the lender offers spares of every size
// the mechanic's open plan could buy. The demo data is shared with other files (the review test gives
// verdicts on the same check), so this test makes its own, and the order of files changes nothing.
const browser = browserPerFile();

describe("borrowing from the club pool", () => {
  it("the plan borrows a size a member offers instead of buying it; the lender agrees", async () => {
    const t = await clubScenario(baseUrl(), "pool", [{ name: "Borrowing four", shared: false }]);
    await offerSpares(t.mentor, t.club.id);
    const { ctx: mechCtx, page: mech } = await signedInPhone(browser, t.mechanic);
    await mech.getByRole("link", { name: /Borrowing four/ }).tap();
    await mech.getByRole("link", { name: /43,800 km/ }).tap();
    await mech.getByRole("button", { name: /3\. Plan/ }).tap();
    const borrow = mech.getByRole("region", { name: "Borrow from the club" });
    const ask = borrow.getByRole("button", { name: new RegExp(`^Ask ${t.mentor.name}`) }).first();
    await ask.waitFor({ timeout: 20_000 });
    const label = await ask.innerText();
    const [, count, size] = /for (\d+) × (\d\.\d\d) mm/.exec(label)!;
    // the plan table says where that shim comes from
    await expect(
      mech
        .getByText(new RegExp(`borrow from ${t.mentor.name}`))
        .first()
        .isVisible(),
    ).resolves.toBe(true);
    await mech.screenshot({ path: "test-results/pool-plan.png", fullPage: true });
    await ask.tap();
    await borrow.getByText(/asked, waiting for the lender/).waitFor({ timeout: 20_000 });
    await waitForMail(t.mentor.email, new RegExp(`asks to borrow ${count} × ${size!.replace(".", "\\.")} mm`));

    const { ctx: lenderCtx, page: lender } = await signedInPhone(browser, t.mentor);
    await lender.goto(`${baseUrl()}/club`);
    const loan = lender.getByTestId(/^loan-/).filter({ hasText: `${count} × ${size} mm to` });
    // the lender reads the request from their own side, not as "waiting for the lender"
    await loan.getByText(/asks you for them: agree or decline/).waitFor({ timeout: 20_000 });
    await expect(loan.innerText()).resolves.not.toMatch(/waiting for the lender/);
    await loan.getByRole("button", { name: "Agree to lend" }).tap();
    await loan.getByText(/agreed: they will collect them/).waitFor({ timeout: 20_000 });
    await lender.screenshot({ path: "test-results/pool-lender.png", fullPage: true });

    await waitForMail(t.mechanic.email, /Shim loan agreed/);
    await mech.reload();
    await mech.getByRole("button", { name: /3\. Plan/ }).tap();
    await mech
      .getByRole("region", { name: "Borrow from the club" })
      .getByText(/agreed: collect them/)
      .waitFor({ timeout: 20_000 });

    // the handover: the lender marks it, and the shims appear on the borrower's tray
    await loan.getByRole("button", { name: "Handed over" }).tap();
    await loan.getByText(/on loan/).waitFor({ timeout: 20_000 });
    await lenderCtx.close();
    await mech.goto(`${baseUrl()}/tray`);
    await mech.getByText(size!, { exact: true }).waitFor({ timeout: 30_000 });
    await mech.getByRole("button", { name: `One fewer ${Number(size)} mm` }).waitFor();
    await mech.screenshot({ path: "test-results/pool-tray.png" });
    await mechCtx.close();
  });
});
