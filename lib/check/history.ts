import {
  DEFAULT_RESOLUTION_MM,
  MIN_TREND_SPAN,
  driftProjection,
  roundOdometer,
  fastClosingValves,
  fromNm,
  type OdometerUnit,
  toNm,
  valveNames,
  type DriftResult,
} from "../lash";
import type { LocalCheck, LocalEngine, LocalReading } from "../sync/local-db";
import { installedOf } from "./derive";

/**
 * The engine's history per valve: each measurement as (odometer, gap = shim + clearance), the
 * least-squares drift, where the clearance with the shim now fitted reaches the band's lower edge,
 * and the valves closing faster than their neighbours.
 */
export interface ValveHistory {
  valveId: string;
  kind: "intake" | "exhaust";
  lowerLimit: number;
  currentShim: number | null;
  points: { odometer: number; gap: number; installed: number; measured: number; checkId: string }[];
  drift: DriftResult;
}

export function engineHistory(
  engine: LocalEngine,
  checks: LocalCheck[],
  readings: LocalReading[],
): { valves: ValveHistory[]; fastClosing: string[] } {
  const byCheck = new Map(checks.map((c) => [c.id, c]));
  const valves = valveNames(engine).map((v) => {
    const spec = v.kind === "intake" ? engine.intake : engine.exhaust;
    const mine = readings
      .filter((r) => r.valve === v.id && byCheck.has(r.checkId))
      .sort((a, b) => byCheck.get(a.checkId)!.odometer - byCheck.get(b.checkId)!.odometer || a.round - b.round);
    const points = mine.flatMap((r) => {
      const installed = installedOf(r);
      if (installed == null || r.measured == null) return [];
      return [
        {
          odometer: byCheck.get(r.checkId)!.odometer,
          gap: fromNm(toNm(installed) + toNm(r.measured)),
          installed,
          measured: r.measured,
          checkId: r.checkId,
        },
      ];
    });
    const last = mine.at(-1);
    const currentShim = last ? (last.fittedShim ?? installedOf(last)) : null;
    // the readings are only as fine as the blades that found them: the widest go/no-go step among them
    const steps = mine.flatMap((r) =>
      r.feelerGo != null && r.feelerNoGo != null && r.feelerNoGo > r.feelerGo ? [r.feelerNoGo - r.feelerGo] : [],
    );
    const drift = driftProjection({
      points: points.map((p) => ({ odometer: p.odometer, installed: p.installed, measured: p.measured })),
      lowerLimit: spec.min,
      currentShim: currentShim ?? undefined,
      resolution: steps.length ? Math.max(...steps) : DEFAULT_RESOLUTION_MM,
      minSpan: MIN_TREND_SPAN[engine.odometerUnit],
    });
    return { valveId: v.id, kind: v.kind, lowerLimit: spec.min, currentShim, points, drift };
  });
  // compare each valve with the others of its own kind: exhausts run hotter and close faster
  const fastClosing = (["intake", "exhaust"] as const).flatMap((k) =>
    fastClosingValves(
      valves
        .filter((v) => v.kind === k)
        .map((v) => ({ valveId: v.valveId, slopePerThousandKm: v.drift.slopePerThousandKm, verdict: v.drift.verdict })),
    ),
  );
  return { valves, fastClosing };
}

const fmtOdo = (x: number, unit: OdometerUnit) => `${roundOdometer(x, unit).toLocaleString("en")} ${unit}`;

/**
 * The sentence under a valve's chart: what its checks show, in words that promise no more than the
 * readings hold (the rules are driftProjection's verdicts). A projection is a rounded range, never a
 * single figure to the kilometre.
 */
export function driftWords(h: ValveHistory, unit: OdometerUnit): string {
  const d = h.drift;
  const per = `mm per 1,000 ${unit}`;
  switch (d.verdict) {
    case "few-checks":
      return `No trend yet: a trend needs three checks (${d.checks} so far).`;
    case "short-distance":
      return `No trend yet: these checks span ${Math.round(d.span).toLocaleString("en")} ${unit}; a trend needs at least ${MIN_TREND_SPAN[unit].toLocaleString("en")} ${unit}.`;
    case "steady":
      return `${h.valveId} stays put: over ${Math.round(d.span).toLocaleString("en")} ${unit} its gap changed by less than one blade step.`;
    case "unclear":
      return `${h.valveId}: the readings scatter more than they move, so no clear trend over ${Math.round(d.span).toLocaleString("en")} ${unit}.`;
    case "opening":
      return `${h.valveId} opens up slowly (${Math.abs(d.slopePerThousandKm!).toFixed(3)} ${per}); clearances opening point to cam or bucket wear rather than the seat.`;
    case "closing": {
      const rate = `${h.valveId} closes about ${Math.abs(d.slopePerThousandKm!).toFixed(3)} ${per}.`;
      const last = h.points.at(-1)?.odometer ?? 0;
      if (d.limitAtOdometer != null && d.limitAtOdometer <= last)
        return `${rate} With the shim now in it is already at or past the band's lower edge.`;
      const r = d.limitRange!;
      if (r.from <= last)
        return `${rate} With the shim now in it is near the band's lower edge already${r.to == null ? "" : `, and on this trend reaches it by about ${fmtOdo(r.to, unit)}`} (95% range from the spread of the readings).`;
      const range =
        r.to == null
          ? `not before about ${fmtOdo(r.from, unit)}`
          : roundOdometer(r.from, unit) === roundOdometer(r.to, unit)
            ? `near ${fmtOdo(r.from, unit)}`
            : `between about ${fmtOdo(r.from, unit)} and ${fmtOdo(r.to, unit)}`;
      return `${rate} With the shim now in it reaches the band's lower edge ${range} (95% range from the spread of the readings).`;
    }
  }
}
