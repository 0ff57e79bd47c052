import type { ValveView } from "@/lib/check/derive";
import type { LocalEngine } from "@/lib/sync/local-db";
import type { ReadingEntry } from "./valve-card";

/** What the two steps that take readings (measure, verify) are given by the check screen. */
export interface EntryStepProps {
  engine: LocalEngine;
  views: ValveView[];
  /** the engine's shim series, for the cards' shim pickers */
  sizes: number[];
  step: number;
  save: (v: ValveView) => (r: ReadingEntry) => Promise<void>;
  focusHeading?: boolean;
}
