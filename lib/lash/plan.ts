import { munkres } from "munkres";
import { parseOrThrow, LashInputError } from "./errors";
import { planInputSchema, type Spec } from "./schemas";
import { bandNm, inBand, recommendNm, type BandNm } from "./shim";
import { toNm, fromNm } from "./units";

export type ShimSource =
  | { kind: "keep" }
  | { kind: "valve"; valveId: string }
  | { kind: "tray" }
  | { kind: "club"; ownerId: string }
  | { kind: "buy" };

export interface PlanValve {
  id: string;
  /** stamped size, or the micrometer thickness when one was measured (used exactly) */
  installed: number;
  measured: number;
  spec: Spec;
}

export interface Assignment {
  valveId: string;
  size: number;
  predicted: number;
  source: ShimSource;
  inSpec: boolean;
  /** installed + measured - target */
  ideal: number;
}

export interface SizeCount {
  size: number;
  count: number;
}

export interface ShimPlan {
  assignments: Assignment[];
  buy: SizeCount[];
  /** what to borrow from club members, per lender and size */
  borrow: (SizeCount & { ownerId: string })[];
  toTray: SizeCount[];
}

/** How far outside the system's range an installed shim may be (worn or odd stock) before it is nonsense. */
export const INSTALLED_RANGE_SLACK_MM = 0.1;

interface Row {
  index: number;
  id: string;
  installedNm: number;
  gapNm: number;
  /** the band a new shim aims for: the spec's band less the tight-edge margin */
  band: BandNm;
  spec: BandNm;
  /** the valve's own best answer from the catalog alone (buy, or keep when nothing does better) */
  fallback: ReturnType<typeof recommendNm>;
}

type Column =
  | { kind: "valve"; rowIndex: number; sizeNm: number }
  | { kind: "tray"; sizeNm: number }
  | { kind: "club"; sizeNm: number; ownerId: string }
  | { kind: "private"; rowIndex: number };

/** The band less a margin at its tight edge, its target kept inside what is left. */
function narrowed(b: BandNm, marginNm: number): BandNm {
  const min = Math.min(b.min + marginNm, b.max);
  return { min, max: b.max, target: Math.max(b.target, min) };
}

function group(sizesNm: number[]): SizeCount[] {
  const counts = new Map<number, number>();
  for (const s of sizesNm) counts.set(s, (counts.get(s) ?? 0) + 1);
  return [...counts.entries()].sort((a, b) => a[0] - b[0]).map(([s, count]) => ({ size: fromNm(s), count }));
}

/**
 * The shim plan for an engine (DESIGN.md section 4.3). Valves in their band keep their shim. Every
 * other valve gets a shim from another valve of this engine, the tray, a club member's pool, or the
 * shop, such that, in this order: the most valves end in their band, the fewest shims are bought,
 * the fewest are borrowed, the total distance from target is smallest, and ties lean to the looser
 * valve. This is solved exactly as a rectangular
 * assignment (Hungarian method, the `munkres` package) over a lexicographic cost; a valve can always
 * fall back to its own column (buy the catalog's best size, or keep its shim), so a full matching
 * always exists.
 */
export type PlanAim = "fewest-bought" | "nearest-target";

export function planShims(input: { valves: PlanValve[]; sizes: number[]; tray?: SizeCount[]; pool?: (SizeCount & { ownerId: string })[]; aim?: PlanAim; tightMargin?: number }): ShimPlan {
  const p = parseOrThrow(planInputSchema, input, "plan input");
  const sizesNm = [...new Set(p.sizes.map(toNm))].sort((a, b) => a - b);
  const slack = toNm(INSTALLED_RANGE_SLACK_MM);
  const marginNm = toNm(p.tightMargin);
  const lo = sizesNm[0]! - slack;
  const hi = sizesNm[sizesNm.length - 1]! + slack;

  const assignments: (Assignment | undefined)[] = new Array(p.valves.length);
  const rows: Row[] = [];
  p.valves.forEach((v, index) => {
    const installedNm = toNm(v.installed);
    if (installedNm < lo || installedNm > hi)
      throw new LashInputError(`Valve ${v.id}: the installed shim ${v.installed} mm is outside this engine's shim range`, [
        { path: `valves.${index}.installed`, message: "outside the shim system's range" },
      ]);
    const spec = bandNm(v.spec);
    const measuredNm = toNm(v.measured);
    // a new shim aims inside the band less the margin at its tight edge (the target moves up if it
    // falls in the margin); whether a valve needs a change, and its in-spec flag, use the band itself
    const band = marginNm > 0 ? narrowed(spec, marginNm) : spec;
    const fallback = recommendNm(installedNm, measuredNm, band, sizesNm);
    if (inBand(measuredNm, spec)) {
      assignments[index] = { valveId: v.id, size: fromNm(installedNm), predicted: fromNm(measuredNm), source: { kind: "keep" }, inSpec: true, ideal: fromNm(fallback.idealNm) };
      return;
    }
    rows.push({ index, id: v.id, installedNm, gapNm: installedNm + measuredNm, band, spec, fallback });
  });

  const outgoing: number[] = []; // installed sizes of valves whose shim comes out
  if (rows.length > 0) {
    // Columns. A valve whose own best answer is to keep its shim (nothing in the catalog does better)
    // keeps it out of the pool: that shim stays where it is.
    const columns: Column[] = [];
    for (const r of rows) if (r.fallback.change) columns.push({ kind: "valve", rowIndex: r.index, sizeNm: r.installedNm });
    const trayCounts = new Map<number, number>();
    for (const t of p.tray) if (t.count > 0) trayCounts.set(toNm(t.size), (trayCounts.get(toNm(t.size)) ?? 0) + t.count);
    for (const [sizeNm, count] of [...trayCounts.entries()].sort((a, b) => a[0] - b[0])) {
      // Copies beyond the number of valves this size can serve are never needed.
      const useful = rows.filter((r) => inBand(r.gapNm - sizeNm, r.band)).length;
      for (let k = 0; k < Math.min(count, useful); k++) columns.push({ kind: "tray", sizeNm });
    }
    const poolCounts = new Map<string, { sizeNm: number; ownerId: string; count: number }>();
    for (const t of p.pool) {
      if (t.count <= 0) continue;
      const key = `${toNm(t.size)}|${t.ownerId}`;
      const e = poolCounts.get(key) ?? { sizeNm: toNm(t.size), ownerId: t.ownerId, count: 0 };
      e.count += t.count;
      poolCounts.set(key, e);
    }
    for (const e of [...poolCounts.values()].sort((a, b) => a.sizeNm - b.sizeNm || a.ownerId.localeCompare(b.ownerId))) {
      const useful = rows.filter((r) => inBand(r.gapNm - e.sizeNm, r.band)).length;
      for (let k = 0; k < Math.min(e.count, useful); k++) columns.push({ kind: "club", sizeNm: e.sizeNm, ownerId: e.ownerId });
    }
    for (const r of rows) columns.push({ kind: "private", rowIndex: r.index });

    // Lexicographic weights, sized from this problem so that every sum stays an exact integer. The
    // aim decides whether buying fewer outranks landing nearer the target, or the other way round.
    const n = rows.length;
    const dMax = Math.max(...rows.map((r) => Math.max(r.band.target - r.band.min, r.band.max - r.band.target)));
    let wDist: number, BORROW: number, BUY: number, OUT: number;
    if (p.aim === "fewest-bought") {
      wDist = n + 1; // a nanometre of distance outweighs every tie-break together
      const rowMax = wDist * dMax + 1;
      BORROW = n * rowMax + 1;
      BUY = n * (BORROW + rowMax) + 1;
      OUT = n * (BUY + BORROW + rowMax) + 1;
    } else {
      BORROW = n + 1; // one borrow outweighs every tie-break together
      BUY = n * (BORROW + 1) + 1;
      wDist = n * (BUY + BORROW + 1) + 1;
      OUT = n * (wDist * dMax + BUY + BORROW + 1) + 1;
    }
    if (n * (OUT + BUY + BORROW + wDist * dMax + 1) > Number.MAX_SAFE_INTEGER) throw new LashInputError("Plan too large to solve exactly");

    const inBandCost = (r: Row, sizeNm: number) => {
      const predicted = r.gapNm - sizeNm;
      if (!inBand(predicted, r.band)) return Infinity;
      // a tight-side result costs one unit more: on a tie the thinner shim wins
      return wDist * Math.abs(predicted - r.band.target) + (predicted < r.band.target ? 1 : 0);
    };
    const cost = rows.map((r) =>
      columns.map((c) => {
        if (c.kind === "private") {
          if (c.rowIndex !== r.index) return Infinity;
          if (r.fallback.inSpec) return BUY + inBandCost(r, r.fallback.sizeNm);
          return r.fallback.change ? OUT + BUY : OUT;
        }
        if (c.kind === "valve" && c.rowIndex === r.index) return Infinity;
        if (c.kind === "club") return BORROW + inBandCost(r, c.sizeNm);
        return inBandCost(r, c.sizeNm);
      }),
    );

    const pairs = munkres(cost);
    const taken = new Set<number>();
    for (const [ri, ci] of pairs) {
      const r = rows[ri]!;
      const c = columns[ci]!;
      taken.add(ci);
      let sizeNm: number;
      let source: ShimSource;
      if (c.kind === "private") {
        sizeNm = r.fallback.sizeNm;
        source = r.fallback.change ? { kind: "buy" } : { kind: "keep" };
      } else if (c.kind === "valve") {
        sizeNm = c.sizeNm;
        source = { kind: "valve", valveId: p.valves[c.rowIndex]!.id };
      } else if (c.kind === "club") {
        sizeNm = c.sizeNm;
        source = { kind: "club", ownerId: c.ownerId };
      } else {
        sizeNm = c.sizeNm;
        source = { kind: "tray" };
      }
      const predictedNm = r.gapNm - sizeNm;
      assignments[r.index] = {
        valveId: r.id,
        size: fromNm(sizeNm),
        predicted: fromNm(predictedNm),
        source,
        inSpec: inBand(predictedNm, r.spec),
        ideal: fromNm(r.fallback.idealNm),
      };
    }
    columns.forEach((c, ci) => {
      if (c.kind === "valve" && !taken.has(ci)) outgoing.push(c.sizeNm);
    });
  }

  const done = assignments as Assignment[];
  const borrowed = new Map<string, { ownerId: string; sizeNm: number; count: number }>();
  for (const a of done) {
    if (a.source.kind !== "club") continue;
    const key = `${a.source.ownerId}|${toNm(a.size)}`;
    const e = borrowed.get(key) ?? { ownerId: a.source.ownerId, sizeNm: toNm(a.size), count: 0 };
    e.count++;
    borrowed.set(key, e);
  }
  return {
    assignments: done,
    buy: group(done.filter((a) => a.source.kind === "buy").map((a) => toNm(a.size))),
    borrow: [...borrowed.values()].sort((a, b) => a.sizeNm - b.sizeNm || a.ownerId.localeCompare(b.ownerId)).map((e) => ({ size: fromNm(e.sizeNm), count: e.count, ownerId: e.ownerId })),
    toTray: group(outgoing),
  };
}
