import "./zod-config";
import { z } from "zod";
import { LABEL_FORBIDDEN, LABEL_FORBIDDEN_MESSAGE } from "./label-rules";

export { LABEL_FORBIDDEN, LABEL_FORBIDDEN_MESSAGE };

/** A one-line label: trimmed, at least one character, at most `max`, no control characters. */
export function labelSchema(max: number, empty: string) {
  return z
    .string()
    .trim()
    .min(1, { error: empty })
    .max(max, { error: `at most ${max} characters` })
    .refine((s) => !LABEL_FORBIDDEN.test(s), { error: LABEL_FORBIDDEN_MESSAGE });
}

/** The same rule for an optional label (a note): empty allowed. */
export function optionalLabelSchema(max: number) {
  return z
    .string()
    .trim()
    .max(max, { error: `at most ${max} characters` })
    .refine((s) => !LABEL_FORBIDDEN.test(s), { error: LABEL_FORBIDDEN_MESSAGE });
}
