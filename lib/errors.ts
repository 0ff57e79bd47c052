/**
 * The domain's errors. Services and appliers throw these and nothing HTTP-shaped: route() in
 * server/http.ts alone turns them into answers, and the sync push alone turns them into a
 * mutation's rejection reason. The message is for the user.
 */
export type DomainErrorKind =
  /** the input breaks a rule of its own (422, with fields) */
  | "invalid"
  /** no such record, or not the caller's to see (404: a probe cannot tell the two apart) */
  | "not_found"
  /** the caller may see it but not do this (403) */
  | "forbidden"
  /** the id is taken (409) */
  | "conflict"
  /** the rules refuse this step now (409): none left on offer, the loan is already settled */
  | "refused"
  /** a body or file over its limit (413) */
  | "too_large"
  /** a file of a kind the server does not take (415) */
  | "unsupported"
  /** a request the server cannot read, or a spent token (400) */
  | "bad_request"
  /** the server is saturated: try again after retryAfterSeconds (503) */
  | "overloaded"
  /** this caller or address has asked too often for now (429) */
  | "throttled";

export class DomainError extends Error {
  constructor(
    readonly kind: DomainErrorKind,
    message: string,
    readonly extra: { fields?: Record<string, string>; code?: string; retryAfterSeconds?: number } = {},
  ) {
    super(message);
    this.name = "DomainError";
  }
}

export const notFound = (what = "record") => new DomainError("not_found", `No such ${what}`);
export const forbidden = (message = "You may read this but not change it") => new DomainError("forbidden", message);
export const conflict = (message: string) => new DomainError("conflict", message);
export const refused = (message: string) => new DomainError("refused", message);
export const invalid = (message: string, fields?: Record<string, string>) =>
  new DomainError("invalid", message, { fields });
export const overloaded = (message = "The server is busy: try again in a moment", retryAfterSeconds = 2) =>
  new DomainError("overloaded", message, { retryAfterSeconds });
/** A caller beyond one of its budgets (server/budgets.ts): 429 with Retry-After; nothing of the refused request was done. */
export const tooMany = (message: string, retryAfterSeconds: number) =>
  new DomainError("throttled", message, { retryAfterSeconds });

/** The first issue of a set of field problems as one message ("intake.max: below the minimum"). */
export function invalidFields(fields: Record<string, string>): DomainError {
  const [first] = Object.entries(fields);
  return invalid(first ? `${first[0]}: ${first[1]}` : "The input is not valid", fields);
}

/** The domain error behind an error, looking through wrappers (a database driver wraps what a query throws). */
export function domainErrorOf(e: unknown): DomainError | undefined {
  for (let cur: unknown = e, depth = 0; cur && depth < 5; depth++) {
    if (cur instanceof DomainError) return cur;
    cur = (cur as { cause?: unknown }).cause;
  }
  return undefined;
}
