import "./zod-config";
import * as z from "zod/mini";
import { isCommonPassword, PASSWORD_MAX, PASSWORD_MIN } from "../auth/password-list";
import { LABEL_FORBIDDEN, LABEL_FORBIDDEN_MESSAGE } from "./label-rules";

/**
 * The account pages' forms, checked in the browser with zod's small build (zod/mini, tree-shaken:
 * the sign-in and sign-up pages are the first a newcomer or a mentor opens on mobile data). The
 * server checks the same fields with its own schemas (./account.ts, full zod); the rules they share
 * (the common-password list, the label's forbidden characters, the lengths) live in one place.
 * tests/unit/lib/schemas/forms.test.ts holds the two to the same answers.
 */
export const emailField = z.pipe(
  z.string({ error: "enter an e-mail address" }).check(z.trim(), z.toLowerCase(), z.maxLength(254)),
  z.email({ error: "enter a valid e-mail address" }),
);

export const passwordField = z.string({ error: "enter a password" }).check(
  z.minLength(PASSWORD_MIN, { error: `use at least ${PASSWORD_MIN} characters` }),
  z.maxLength(PASSWORD_MAX, { error: `use at most ${PASSWORD_MAX} characters` }),
  z.refine((p) => !isCommonPassword(p), { error: "this password is too common: choose another" }),
);

function labelField(max: number, empty: string) {
  return z.string().check(
    z.trim(),
    z.minLength(1, { error: empty }),
    z.maxLength(max, { error: `at most ${max} characters` }),
    z.refine((s) => !LABEL_FORBIDDEN.test(s), { error: LABEL_FORBIDDEN_MESSAGE }),
  );
}

export const signInForm = z.object({ email: emailField, password: z.string().check(z.minLength(1, { error: "enter your password" })) });
export const signUpForm = z.object({ email: emailField, name: labelField(120, "enter your name"), password: passwordField });
export const verifyForm = z.object({ password: z.string().check(z.minLength(1, { error: "missing: the one you chose when you signed up" })) });
export const forgotForm = z.object({ email: emailField });
export const resetForm = z.object({ password: passwordField });
export type { z };
