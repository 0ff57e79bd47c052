import type { z } from "zod";

/** One problem with an input, pointing at the field it concerns. */
export interface LashIssue {
  path: string;
  message: string;
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
  const issues = result.error.issues.map((i) => ({
    path: i.path.map(String).join("."),
    message: i.message,
  }));
  const first = issues[0];
  const where = first && first.path ? ` (${first.path})` : "";
  throw new LashInputError(`Invalid ${what}${where}: ${first?.message ?? "bad input"}`, issues);
}
