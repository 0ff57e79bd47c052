import { describe, expect, it } from "vitest";
import { blockerText, deleteAccountInput } from "@/lib/account/deletion";

describe("the deletion's proof", () => {
  it("takes a password or a link token, never both and never neither", () => {
    expect(deleteAccountInput.safeParse({ password: "feeler-blade-0.25" }).success).toBe(true);
    expect(deleteAccountInput.safeParse({ token: "A".repeat(43) }).success).toBe(true);
    for (const bad of [
      {},
      { password: "x", token: "A".repeat(43) },
      { password: "" },
      { token: "<script>" },
      { password: 42 },
      { password: "x", extra: 1 },
    ]) {
      const r = deleteAccountInput.safeParse(bad);
      expect(r.success, JSON.stringify(bad)).toBe(false);
    }
    // the error lands on a field the page can show it beside
    expect(deleteAccountInput.safeParse({}).error?.issues[0]?.path).toEqual(["password"]);
  });
});

describe("what stops a deletion, in words", () => {
  it("names the club, and the other side of a loan", () => {
    expect(blockerText({ kind: "last-admin", clubId: "c", clubName: "Thursday Garage Club", members: 3 })).toMatch(
      /only admin of Thursday Garage Club.*2 other members/,
    );
    expect(
      blockerText({
        kind: "open-loan",
        loanId: "l",
        otherName: "Ada",
        side: "borrower",
        count: 2,
        size: 2.6,
        state: "on loan",
      }),
    ).toMatch(/borrowed from Ada/);
    expect(
      blockerText({
        kind: "open-loan",
        loanId: "l",
        otherName: "Ben",
        side: "lender",
        count: 1,
        size: 2.6,
        state: "on the way back",
      }),
    ).toMatch(/^Ben still has 1 × 2\.6/);
  });
});
