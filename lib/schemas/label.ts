import "./zod-config";
import { z } from "zod";

/**
 * Characters a short label (an engine's, a club's or a person's name, a pool note) never holds:
 * control characters (C0, DEL, C1: line breaks, tabs, escape), the line and paragraph separators,
 * and the bidirectional overrides and isolates that make text read otherwise than it is stored.
 * A label is shown on one line, sent in mail subjects and written to CSV; a line break in one
 * splits a mail header or a CSV cell's formula guard (OWASP ASVS 5.0 V1 Encoding and
 * Sanitization; OWASP "CSV Injection"; Unicode TR #36 on bidi spoofing).
 */
export const LABEL_FORBIDDEN = /[\p{Cc}\u2028\u2029\u202A-\u202E\u2066-\u2069]/u;
export const LABEL_FORBIDDEN_MESSAGE = "no line breaks, tabs or other control characters";

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
