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

export const CAUTIONS = [
  "Engine cold (unless the manual's spec is hot)",
  "Ignition off and battery disconnected",
  "Plugs out; turn the crank by hand, in its normal direction only",
  "Rag in the cam-chain tunnel and drain-backs so nothing can drop in",
  "Magnet ready for lifting shims; the proper bucket tool at hand",
  "The service manual has the last word on figures, torques and method",
];
