import { formatLength, shimNumber, type LengthUnit } from "../lash";
import type { LocalReading } from "../sync/local-db";
import type { ReadingValueField } from "../schemas/records";

type Reading = Pick<LocalReading, "valve" | "round" | ReadingValueField>;

/** "2.80 stamp, 2.78 micrometer": both when both were taken, since a worn stamp is the reason to measure. */
export function shimWords(r: Pick<Reading, "installedStamp" | "installedMicrometer">): string {
  const parts = [
    r.installedStamp != null ? `${shimNumber(r.installedStamp)} stamp` : null,
    r.installedMicrometer != null ? `${shimNumber(r.installedMicrometer, true)} micrometer` : null,
  ].filter(Boolean);
  return parts.length ? parts.join(", ") : "shim ?";
}

/** How the clearance was found: the go and no-go blades as their labels, or a typed value as typed (0.075 stays 0.075). */
export function foundWords(
  r: Pick<Reading, "measured" | "method" | "feelerGo" | "feelerNoGo">,
  unit: LengthUnit,
): string {
  if (r.measured == null) return "not measured";
  if (r.method === "typed") return `${formatLength(r.measured, unit)} typed`;
  return `${formatLength(r.feelerGo ?? r.measured, unit)} goes${r.feelerNoGo != null ? `, ${formatLength(r.feelerNoGo, unit)} does not` : ""}`;
}

/**
 * Every round of one valve in a check, first reading to the last re-check, each with its shim, how
 * the clearance was found and the shim fitted after it: the whole story a reviewer reads.
 */
export function valveRounds(
  readings: Reading[],
  valve: string,
  unit: LengthUnit,
): { round: number; title: string; text: string }[] {
  return readings
    .filter((r) => r.valve === valve)
    .sort((a, b) => a.round - b.round)
    .map((r) => ({
      round: r.round,
      title: r.round === 0 ? "First reading" : `Re-check ${r.round}`,
      text: `${shimWords(r)} · ${foundWords(r, unit)}${r.fittedShim != null ? ` · then fitted ${shimNumber(r.fittedShim)}` : ""}`,
    }));
}
