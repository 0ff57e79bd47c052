import { isCommonPassword, PASSWORD_MAX, PASSWORD_MIN } from "../auth/password-list";
import { LABEL_FORBIDDEN, LABEL_FORBIDDEN_MESSAGE } from "./label-rules";

/**
 * The account pages' forms, checked in the browser without zod: the sign-in and sign-up pages are
 * the first a newcomer or a mentor opens on mobile data, and zod's small build (zod/mini) still
 * brought zod's whole core into their first JavaScript under our bundler (23 KB compressed, measured
 * on the build's chunks). The server checks the same fields with its own schemas (./account.ts,
 * full zod); the rules they share (the common-password list, the label's forbidden characters, the
 * lengths) live in one place, and tests/unit/lib/schemas/forms.test.ts holds the two to the same
 * answers.
 */
export type FormCheck<T> = { ok: true; data: T } | { ok: false; errors: Partial<Record<keyof T, string>> };

/** zod 4's e-mail pattern (z.email(), zod/v4/core/regexes.ts), which the server applies. */
const EMAIL = /^(?:[A-Za-z0-9_'+\-]+\.)*[A-Za-z0-9_'+\-]*[A-Za-z0-9_+-]@(?:[A-Za-z0-9][A-Za-z0-9\-]*\.)+[A-Za-z]{2,}$/;

type Field<T> = (raw: unknown) => { ok: true; value: T } | { ok: false; message: string };

const text = (raw: unknown) => (typeof raw === "string" ? raw : null);

export const emailField: Field<string> = (raw) => {
  const s = text(raw);
  if (s === null) return { ok: false, message: "enter an e-mail address" };
  const v = s.trim().toLowerCase();
  if (v.length > 254 || !EMAIL.test(v)) return { ok: false, message: "enter a valid e-mail address" };
  return { ok: true, value: v };
};

export const passwordField: Field<string> = (raw) => {
  const p = text(raw);
  if (p === null) return { ok: false, message: "enter a password" };
  if (p.length < PASSWORD_MIN) return { ok: false, message: `use at least ${PASSWORD_MIN} characters` };
  if (p.length > PASSWORD_MAX) return { ok: false, message: `use at most ${PASSWORD_MAX} characters` };
  if (isCommonPassword(p)) return { ok: false, message: "this password is too common: choose another" };
  return { ok: true, value: p };
};

const filled =
  (message: string): Field<string> =>
  (raw) => {
    const s = text(raw);
    return s ? { ok: true, value: s } : { ok: false, message };
  };

function labelField(max: number, empty: string): Field<string> {
  return (raw) => {
    const s = text(raw)?.trim() ?? "";
    if (s.length < 1) return { ok: false, message: empty };
    if (s.length > max) return { ok: false, message: `at most ${max} characters` };
    if (LABEL_FORBIDDEN.test(s)) return { ok: false, message: LABEL_FORBIDDEN_MESSAGE };
    return { ok: true, value: s };
  };
}

function form<T extends Record<string, unknown>>(fields: { [K in keyof T]: Field<T[K]> }) {
  return (values: Record<string, unknown>): FormCheck<T> => {
    const data = {} as T;
    const errors: Partial<Record<keyof T, string>> = {};
    for (const k of Object.keys(fields) as (keyof T)[]) {
      const r = fields[k](values[k as string]);
      if (r.ok) data[k] = r.value;
      else errors[k] = r.message;
    }
    return Object.keys(errors).length ? { ok: false, errors } : { ok: true, data };
  };
}

export const signInForm = form<{ email: string; password: string }>({
  email: emailField,
  password: filled("enter your password"),
});
export const signUpForm = form<{ email: string; name: string; password: string }>({
  email: emailField,
  name: labelField(120, "enter your name"),
  password: passwordField,
});
export const verifyForm = form<{ password: string }>({
  password: filled("missing: the one you chose when you signed up"),
});
export const forgotForm = form<{ email: string }>({ email: emailField });
export const resetForm = form<{ password: string }>({ password: passwordField });
