import "server-only";
import { fieldErrors, shimSeries } from "@/lib/lash";
import { engineInput, readingProblems, type ReadingInput } from "@/lib/schemas/records";
import { engineToApi, type ApiEngine } from "@/db/queries/garage";
import type { EngineRow } from "@/db/schema";
import { invalidFields } from "@/lib/errors";

/** The engine's shim sizes, from its series or explicit list. */
export function engineSizes(e: Pick<ApiEngine, "shims">): number[] {
  return "sizes" in e.shims ? (e.shims.sizes ?? []) : shimSeries(e.shims.min, e.shims.max, e.shims.step);
}

/** Merge a partial update into the stored engine and validate the result as a whole. */
export function mergeEngine(row: EngineRow, patch: Record<string, unknown>) {
  const current = engineToApi(row);
  const merged = { ...current, ...patch };
  const parsed = engineInput.safeParse(merged);
  if (!parsed.success) {
    throw invalidFields(fieldErrors(parsed.error.issues));
  }
  return parsed.data;
}

export function checkReadingsFit(row: EngineRow, rs: ReadingInput[]) {
  const e = engineToApi(row);
  const problems = readingProblems({ ...e, shimSizes: engineSizes(e) }, rs);
  if (Object.keys(problems).length) throw invalidFields(problems);
}
