import type { LocalCheck, LocalReading } from "../sync/local-db";

/**
 * What the last check left in the engine: each bucket's default shim for the next check. The
 * previous check is the latest one of the same engine started before this one (a check started
 * later, say a re-opened old one, must not lend its shims backwards).
 */
export function previousCheck<C extends Pick<LocalCheck, "id" | "engineId" | "startedAt">>(
  check: C,
  checks: C[],
): C | undefined {
  const at = +new Date(check.startedAt);
  return checks
    .filter((c) => c.id !== check.id && c.engineId === check.engineId && +new Date(c.startedAt) < at)
    .sort((a, b) => +new Date(b.startedAt) - +new Date(a.startedAt))[0];
}

/**
 * The shim each valve ended that check with: the last round's fitted shim if one was fitted, else
 * what was measured in the bucket (micrometer before stamp, since stamps wear or mislead).
 */
export function lastShims(
  readings: Pick<LocalReading, "valve" | "round" | "fittedShim" | "installedMicrometer" | "installedStamp">[],
): Map<string, number> {
  const m = new Map<string, number>();
  for (const r of [...readings].sort((a, b) => a.round - b.round)) {
    const s = r.fittedShim ?? r.installedMicrometer ?? r.installedStamp;
    if (s != null) m.set(r.valve, s);
  }
  return m;
}
