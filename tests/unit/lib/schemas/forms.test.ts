import { describe, expect, it } from "vitest";
import { signUpInput, emailOnlyInput, newPasswordInput } from "@/lib/schemas/account";
import { forgotForm, resetForm, signUpForm } from "@/lib/schemas/forms";

/**
 * The account forms check in the browser with zod's small build; the server checks the same
 * fields with full zod. Every value here gets the same answer from both (invented addresses).
 */
const emails = ["ann@example.org", "  Ann@Example.ORG ", "", "not-an-address", "a@b", `${"x".repeat(250)}@example.org`, "ann@example.org\n"];
const passwords = ["", "short", "password123", "PASSWORD123", "a-long-enough-passphrase", "x".repeat(128), "x".repeat(129)];
const names = ["Ann", "", "   ", "Ann\tLee", "A\u202EB", "x".repeat(120), "x".repeat(121)];

describe("the browser's account forms and the server's schemas", () => {
  it("agree on every e-mail address, with the same cleaned value", () => {
    for (const email of emails) {
      const browser = forgotForm.safeParse({ email });
      const server = emailOnlyInput.safeParse({ email });
      expect(browser.success, email).toBe(server.success);
      if (browser.success && server.success) expect(browser.data).toEqual(server.data);
    }
  });
  it("agree on every password and name of a sign-up", () => {
    for (const password of passwords)
      for (const name of names) {
        const v = { email: "ann@example.org", name, password };
        const browser = signUpForm.safeParse(v);
        const server = signUpInput.safeParse(v);
        expect(browser.success, JSON.stringify(v)).toBe(server.success);
        if (browser.success && server.success) expect(browser.data).toEqual(server.data);
        else if (!browser.success && !server.success) expect(browser.error.issues.map((i) => i.message)).toEqual(server.error.issues.map((i) => i.message));
      }
    for (const password of passwords) expect(resetForm.safeParse({ password }).success).toBe(newPasswordInput.safeParse({ token: "a".repeat(30), password }).success);
  });
});
