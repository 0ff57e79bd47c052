import { driftProjection, fastClosingValves, valveNames, type DriftResult } from "../lash";
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

export function engineHistory(engine: LocalEngine, checks: LocalCheck[], readings: LocalReading[]): { valves: ValveHistory[]; fastClosing: string[] } {
  const byCheck = new Map(checks.map((c) => [c.id, c]));
  const valves = valveNames(engine).map((v) => {
    const spec = v.kind === "intake" ? engine.intake : engine.exhaust;
    const mine = readings
      .filter((r) => r.valve === v.id && byCheck.has(r.checkId))
      .sort((a, b) => byCheck.get(a.checkId)!.odometer - byCheck.get(b.checkId)!.odometer || a.round - b.round);
    const points = mine.flatMap((r) => {
      const installed = installedOf(r);
      if (installed == null || r.measured == null) return [];
      return [{ odometer: byCheck.get(r.checkId)!.odometer, gap: Math.round((installed + r.measured) * 1e6) / 1e6, installed, measured: r.measured, checkId: r.checkId }];
    });
    const last = mine.at(-1);
    const currentShim = last ? (last.fittedShim ?? installedOf(last)) : null;
    const drift =
      points.length >= 2
        ? driftProjection({ points: points.map((p) => ({ odometer: p.odometer, installed: p.installed, measured: p.measured })), lowerLimit: spec.min, currentShim: currentShim ?? undefined })
        : { slopePerThousandKm: null, limitAtOdometer: null };
    return { valveId: v.id, kind: v.kind, lowerLimit: spec.min, currentShim, points, drift };
  });
  // compare each valve with the others of its own kind: exhausts run hotter and close faster
  const fastClosing = (["intake", "exhaust"] as const).flatMap((k) => fastClosingValves(valves.filter((v) => v.kind === k).map((v) => ({ valveId: v.valveId, slopePerThousandKm: v.drift.slopePerThousandKm }))));
  return { valves, fastClosing };
}
