import type { CheckStatus } from "@/lib/schemas/records";

/** The five steps of a check, in working order. */
export const STEPS = [
  { key: "prepare", label: "Prepare" },
  { key: "measure", label: "Measure" },
  { key: "plan", label: "Plan" },
  { key: "fit", label: "Fit" },
  { key: "verify", label: "Re-check" },
] as const;
export type Step = (typeof STEPS)[number]["key"];

/**
 * Where a check opens when no step is asked for: the step its work is in (a check left half-fitted
 * opens on Fit, not on the first valve of Measure). A closed check opens on its plan, the record.
 */
export function stepOfStatus(status: CheckStatus, hasReadings: boolean): Step {
  switch (status) {
    case "measuring":
      return hasReadings ? "measure" : "prepare";
    case "planned":
    case "closed":
      return "plan";
    case "fitting":
      return "fit";
    case "verifying":
      return "verify";
  }
}
