/** The five steps of a check, in working order. */
export const STEPS = [
  { key: "prepare", label: "Prepare" },
  { key: "measure", label: "Measure" },
  { key: "plan", label: "Plan" },
  { key: "fit", label: "Fit" },
  { key: "verify", label: "Re-check" },
] as const;
export type Step = (typeof STEPS)[number]["key"];
