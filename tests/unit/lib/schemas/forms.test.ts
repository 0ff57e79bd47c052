import { describe, expect, it } from "vitest";
import { signUpInput, emailOnlyInput, newPasswordInput } from "@/lib/schemas/account";
import { forgotForm, resetForm, signUpForm } from "@/lib/schemas/forms";

/**
 * The account forms check in the browser without zod; the server checks the same fields with full
 * zod. Every value here gets the same answer from both: accepted with the same cleaned value, or
 * refused on the same fields (invented addresses and names).
 */
const emails = [
  "ann@example.org",
  "  Ann@Example.ORG ",
  "",
  "not-an-address",
  "a@b",
  "a..b@example.org",
  ".a@example.org",
  "ann+tag@sub.example.org",
  `${"x".repeat(250)}@example.org`,
  "ann@example.org\n",
  "ann@exa mple.org",
];
const passwords = [
  "",
  "short",
  "password123",
  "PASSWORD123",
  "a-long-enough-passphrase",
  "x".repeat(128),
  "x".repeat(129),
];
const names = ["Ann", "", "   ", " Ann Lee ", "Ann\tLee", "A\u202EB", "x".repeat(120), "x".repeat(121)];

describe("the browser's account forms and the server's schemas", () => {
  it("agree on every e-mail address, with the same cleaned value", () => {
    for (const email of [...emails, 42, null]) {
      const browser = forgotForm({ email });
      const server = emailOnlyInput.safeParse({ email });
      expect(browser.ok, String(email)).toBe(server.success);
      if (browser.ok && server.success) expect(browser.data).toEqual(server.data);
    }
  });
  it("agree on every password and name of a sign-up, refusing the same fields", () => {
    for (const password of passwords)
      for (const name of names)
        for (const email of ["ann@example.org", "nope"]) {
          const v = { email, name, password };
          const browser = signUpForm(v);
          const server = signUpInput.safeParse(v);
          expect(browser.ok, JSON.stringify(v)).toBe(server.success);
          if (browser.ok && server.success) expect(browser.data).toEqual(server.data);
          if (!browser.ok && !server.success) {
            expect(Object.keys(browser.errors).sort()).toEqual(
              [...new Set(server.error.issues.map((i) => String(i.path[0])))].sort(),
            );
            // where the server words the refusal itself, the browser says the same
            for (const field of ["name", "password"] as const) {
              const first = server.error.issues.find((i) => i.path[0] === field);
              if (first) expect(browser.errors[field]).toBe(first.message);
            }
          }
        }
    for (const password of passwords)
      expect(resetForm({ password }).ok).toBe(newPasswordInput.safeParse({ token: "a".repeat(30), password }).success);
  });
});
