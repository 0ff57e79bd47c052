import {
  bandSide,
  planShims,
  shimSeries,
  valveNames,
  type PlanAim,
  type ShimPlan,
  type ShimSource,
  type ValveName,
} from "../lash";
import type { LocalEngine, LocalReading } from "../sync/local-db";

/**
 * What a check's readings mean for each valve, computed the same way on every screen: its state,
 * the shim in it now, its latest clearance, and the shim plan for those that need a change.
 */
export type ValveState = "unmeasured" | "in-band" | "tight" | "loose" | "fitted" | "verified";

export const STATE_WORDS: Record<ValveState, { word: string; glyph: string }> = {
  unmeasured: { word: "to measure", glyph: "○" },
  "in-band": { word: "in band", glyph: "✓" },
  tight: { word: "tight", glyph: "▼" },
  loose: { word: "loose", glyph: "▲" },
  fitted: { word: "re-measure", glyph: "↻" },
  verified: { word: "verified", glyph: "✓✓" },
};

export interface ValveView {
  valve: ValveName;
  state: ValveState;
  spec: { min: number; max: number; target?: number };
  latest: LocalReading | undefined;
  /** the round a new measurement of this valve belongs to */
  nextRound: number;
  /** the shim in the bucket now: fitted, or micrometer, or stamp */
  installed: number | null;
  measured: number | null;
}

export function engineSizes(e: Pick<LocalEngine, "shims">): number[] {
  return "sizes" in e.shims ? e.shims.sizes : shimSeries(e.shims.min, e.shims.max, e.shims.step);
}

export const installedOf = (r: Pick<LocalReading, "installedMicrometer" | "installedStamp">) =>
  r.installedMicrometer ?? r.installedStamp;

/** A clearance against its band as the core decides it: tight, loose, or in band (on a re-check round, verified). */
export function measuredState(
  measured: number,
  spec: { min: number; max: number },
  round: number,
): "tight" | "loose" | "in-band" | "verified" {
  const side = bandSide(measured, spec);
  return side === "in-band" && round > 0 ? "verified" : side;
}

export function valveViews(
  engine: LocalEngine,
  readings: LocalReading[],
  fallbackShim: (valveId: string) => number | null,
): ValveView[] {
  return valveNames(engine).map((valve) => {
    const spec = valve.kind === "intake" ? engine.intake : engine.exhaust;
    const rs = readings.filter((r) => r.valve === valve.id).sort((a, b) => a.round - b.round);
    const latest = rs.at(-1);
    if (!latest)
      return {
        valve,
        state: "unmeasured",
        spec,
        latest,
        nextRound: 0,
        installed: fallbackShim(valve.id),
        measured: null,
      };
    const installed = latest.fittedShim ?? installedOf(latest);
    if (latest.fittedShim != null)
      return { valve, state: "fitted", spec, latest, nextRound: latest.round + 1, installed, measured: null };
    const m = latest.measured;
    const state: ValveState = m == null ? "unmeasured" : measuredState(m, spec, latest.round);
    return { valve, state, spec, latest, nextRound: latest.round, installed, measured: m };
  });
}

/** The plan over every measured valve whose shim is known; in-band valves keep theirs. */
export interface PlanOptions {
  aim: PlanAim;
  /** mm kept clear of the band's tight edge by a new shim */
  tightMargin: number;
}

export const DEFAULT_PLAN_OPTIONS: PlanOptions = { aim: "fewest-bought", tightMargin: 0 };

export function checkPlan(
  engine: LocalEngine,
  views: ValveView[],
  tray: { size: number; count: number }[],
  pool: { size: number; count: number; ownerId: string }[] = [],
  options: PlanOptions = DEFAULT_PLAN_OPTIONS,
): ShimPlan | null {
  const ready = views.filter((v) => v.measured != null && v.installed != null && v.state !== "fitted");
  if (ready.length === 0) return null;
  return planShims({
    valves: ready.map((v) => ({ id: v.valve.id, installed: v.installed!, measured: v.measured!, spec: v.spec })),
    sizes: engineSizes(engine),
    tray,
    pool,
    ...options,
  });
}

/** "Cylinder 2, intake 1" for a screen reader and a heading; "I2.1" stays the short form. */
export function valveLabel(v: ValveName, perKind: number): string {
  const kind = v.kind === "intake" ? "intake" : "exhaust";
  return perKind > 1 ? `Cyl ${v.cylinder} ${kind} ${v.index}` : `Cyl ${v.cylinder} ${kind}`;
}

/** Valves still open in a check: out of band, waiting to be re-measured after a fit, or never measured. */
export function openValves(views: ValveView[]): ValveView[] {
  return views.filter(
    (v) => v.state === "tight" || v.state === "loose" || v.state === "fitted" || v.state === "unmeasured",
  );
}

/**
 * The valves of the re-check in progress: those fitted and waiting, and those already re-measured
 * in the same round. A valve settled in an earlier round is not asked for again.
 */
export function recheckValves(views: ValveView[]): ValveView[] {
  const waiting = views.filter((v) => v.state === "fitted");
  const round = waiting.length
    ? Math.max(...waiting.map((v) => v.nextRound))
    : Math.max(0, ...views.map((v) => v.latest?.round ?? 0));
  if (round === 0) return [];
  return views.filter((v) => v.state === "fitted" || (v.latest?.round === round && v.latest.fittedShim == null));
}

/** Where a valve's new shim comes from, in words (the plan table and the printed worksheet). */
export function sourceWords(s: ShimSource, lenders?: Map<string, string>): string {
  if (s.kind === "club") return `borrow from ${lenders?.get(s.ownerId) ?? "the club"}`;
  return s.kind === "keep"
    ? "keep"
    : s.kind === "valve"
      ? `from ${s.valveId}`
      : s.kind === "tray"
        ? "from the tray"
        : "buy";
}
