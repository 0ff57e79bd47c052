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
