import type { Ref } from "react";
import type { RotationStep } from "@/lib/lash";
import { positionWords } from "@/lib/check/measuring";

/**
 * The crank-position guide's heading: which position of how many, where to turn and what to measure
 * there. Measure shows the one being worked; the re-check one per position that has a changed valve.
 */
export function PositionGuide({
  ref,
  at,
  of,
  step,
  level = 2,
}: {
  ref?: Ref<HTMLHeadingElement>;
  at: number;
  of: number;
  step: RotationStep | undefined;
  level?: 2 | 3;
}) {
  const H = level === 2 ? "h2" : "h3";
  return (
    <H ref={ref} tabIndex={-1} className="rounded-xl bg-surface-2 p-3 text-lg font-extrabold">
      {of > 0 && (
        <span className="text-accent">
          Position {at + 1} of {of}:{" "}
        </span>
      )}
      {step ? positionWords(step) : "Measure each valve"}
    </H>
  );
}
