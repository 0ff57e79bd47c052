import type { z } from "zod";

/** One problem with an input, pointing at the field it concerns. */
export interface LashIssue {
  path: string;
  message: string;
}

/** A problem as zod reports it (a path of keys) or as a LashIssue (the path already joined). */
export interface IssueLike {
  path: string | readonly PropertyKey[];
  message: string;
}

/** The field a problem concerns: its path joined with dots ("intake.min", "readings.0.valve"). */
export function issuePath(issue: Pick<IssueLike, "path">): string {
  return typeof issue.path === "string" ? issue.path : issue.path.map(String).join(".");
}

/**
 * The one way problems become { field: message }, as the API's 422 body and the forms show them: a
 * problem with the input as a whole is under "_", and a field keeps its first problem. `keyOf` folds
 * a path onto the field a screen shows (the items of a list onto the list). Built through a Map, so a
 * field named "__proto__" or "constructor" by a caller stays a plain key.
 */
export function fieldErrors(
  issues: readonly IssueLike[],
  keyOf: (path: string) => string = (path) => path,
): Record<string, string> {
  const fields = new Map<string, string>();
  for (const i of issues) {
    const key = keyOf(issuePath(i)) || "_";
    if (!fields.has(key)) fields.set(key, i.message);
  }
  return Object.fromEntries(fields);
}

/**
 * Thrown by every lib/lash function when its input makes no sense. The API turns it into a 422 with
 * the issues as fields; the screens show the message beside the field.
 */
export class LashInputError extends Error {
  readonly issues: LashIssue[];
  constructor(message: string, issues: LashIssue[] = []) {
    super(message);
    this.name = "LashInputError";
    this.issues = issues;
  }
}

/** Parse with a shared schema, or throw a LashInputError that names each bad field. */
export function parseOrThrow<S extends z.ZodType>(schema: S, input: unknown, what: string): z.output<S> {
  const result = schema.safeParse(input);
  if (result.success) return result.data;
  const issues = result.error.issues.map((i) => ({ path: issuePath(i), message: i.message }));
  const first = issues[0];
  const where = first && first.path ? ` (${first.path})` : "";
  throw new LashInputError(`Invalid ${what}${where}: ${first?.message ?? "bad input"}`, issues);
}
