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

/** Lenders with a useful shim tried in every combination; beyond this, those with the most useful shims. */
export const MAX_LENDERS_TRIED = 10;

/** Every set of k items, in order. */
function* subsets<T>(items: T[], k: number, start = 0): Generator<T[]> {
  if (k === 0) {
    yield [];
    return;
  }
  for (let i = start; i <= items.length - k; i++)
    for (const rest of subsets(items, k - 1, i + 1)) yield [items[i]!, ...rest];
}

/** Whether two plans fit the same shim from the same place to every valve. */
export function samePlan(a: ShimPlan, b: ShimPlan): boolean {
  const key = (x: Assignment) =>
    `${x.valveId}:${toNm(x.size)}:${x.source.kind}:${"valveId" in x.source ? x.source.valveId : "ownerId" in x.source ? x.source.ownerId : ""}`;
  return (
    a.assignments.length === b.assignments.length && a.assignments.every((x, i) => key(x) === key(b.assignments[i]!))
  );
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
 * The shim plan for an engine (README "The computation core"). Valves in their band keep their shim. Every
 * other valve gets a shim from another valve of this engine, the tray, a club member's pool, or the
 * shop, such that, in this order: the most valves end in their band, the fewest shims are bought
 * or fetched (each lender visited counts as one, like a bought shim), the fewest lenders, the fewest
 * bought, the fewest borrowed, the total distance from target is smallest, and ties lean to the
 * looser valve ("nearest-target" puts the distance second). This is solved exactly as a rectangular
 * assignment (Hungarian method, the `munkres` package) over a lexicographic cost; a valve can always
 * fall back to its own column (buy the catalog's best size, or keep its shim), so a full matching
 * always exists.
 */
export type PlanAim = "fewest-bought" | "nearest-target";

export function planShims(input: {
  valves: PlanValve[];
  sizes: number[];
  tray?: SizeCount[];
  pool?: (SizeCount & { ownerId: string })[];
  aim?: PlanAim;
  tightMargin?: number;
}): ShimPlan {
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
      throw new LashInputError(
        `Valve ${v.id}: the installed shim ${v.installed} mm is outside this engine's shim range`,
        [{ path: `valves.${index}.installed`, message: "outside the shim system's range" }],
      );
    const spec = bandNm(v.spec);
    const measuredNm = toNm(v.measured);
    // a new shim aims inside the band less the margin at its tight edge (the target moves up if it
    // falls in the margin); whether a valve needs a change, and its in-spec flag, use the band itself
    const band = marginNm > 0 ? narrowed(spec, marginNm) : spec;
    const fallback = recommendNm(installedNm, measuredNm, band, sizesNm);
    if (inBand(measuredNm, spec)) {
      assignments[index] = {
        valveId: v.id,
        size: fromNm(installedNm),
        predicted: fromNm(measuredNm),
        source: { kind: "keep" },
        inSpec: true,
        ideal: fromNm(fallback.idealNm),
      };
      return;
    }
    rows.push({ index, id: v.id, installedNm, gapNm: installedNm + measuredNm, band, spec, fallback });
  });

  const outgoing: number[] = []; // installed sizes of valves whose shim comes out
  if (rows.length > 0) {
    // Columns that do not depend on which lenders are asked. A valve whose own best answer is to keep
    // its shim (nothing in the catalog does better) keeps it out of the pool: that shim stays where it is.
    const fixedColumns: Column[] = [];
    for (const r of rows)
      if (r.fallback.change) fixedColumns.push({ kind: "valve", rowIndex: r.index, sizeNm: r.installedNm });
    const trayCounts = new Map<number, number>();
    for (const t of p.tray)
      if (t.count > 0) trayCounts.set(toNm(t.size), (trayCounts.get(toNm(t.size)) ?? 0) + t.count);
    for (const [sizeNm, count] of [...trayCounts.entries()].sort((a, b) => a[0] - b[0])) {
      // Copies beyond the number of valves this size can serve are never needed.
      const useful = rows.filter((r) => inBand(r.gapNm - sizeNm, r.band)).length;
      for (let k = 0; k < Math.min(count, useful); k++) fixedColumns.push({ kind: "tray", sizeNm });
    }
    const poolCounts = new Map<string, { sizeNm: number; ownerId: string; count: number }>();
    for (const t of p.pool) {
      if (t.count <= 0) continue;
      const key = `${toNm(t.size)}|${t.ownerId}`;
      const e = poolCounts.get(key) ?? { sizeNm: toNm(t.size), ownerId: t.ownerId, count: 0 };
      e.count += t.count;
      poolCounts.set(key, e);
    }
    const clubColumns: (Column & { kind: "club" })[] = [];
    for (const e of [...poolCounts.values()].sort(
      (a, b) => a.sizeNm - b.sizeNm || a.ownerId.localeCompare(b.ownerId),
    )) {
      const useful = rows.filter((r) => inBand(r.gapNm - e.sizeNm, r.band)).length;
      for (let k = 0; k < Math.min(e.count, useful); k++)
        clubColumns.push({ kind: "club", sizeNm: e.sizeNm, ownerId: e.ownerId });
    }

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
    if (n * (OUT + BUY + BORROW + wDist * dMax + 1) > Number.MAX_SAFE_INTEGER)
      throw new LashInputError("Plan too large to solve exactly");

    const inBandCost = (r: Row, sizeNm: number) => {
      const predicted = r.gapNm - sizeNm;
      if (!inBand(predicted, r.band)) return Infinity;
      // a tight-side result costs one unit more: on a tie the thinner shim wins
      return wDist * Math.abs(predicted - r.band.target) + (predicted < r.band.target ? 1 : 0);
    };

    /** The best plan that borrows only from these lenders (the assignment over the lexicographic cost), with its score. */
    const solve = (lenders: Set<string>) => {
      const columns: Column[] = [...fixedColumns, ...clubColumns.filter((c) => lenders.has(c.ownerId))];
      for (const r of rows) columns.push({ kind: "private", rowIndex: r.index });
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
      const picked: { row: Row; assignment: Assignment }[] = [];
      const taken = new Set<number>();
      let out = 0,
        buys = 0,
        borrows = 0,
        dist = 0,
        tight = 0;
      // distance in nanometres and the tight-side count, kept apart as the assignment's cost keeps them
      const near = (r: Row, sizeNm: number) => {
        const predicted = r.gapNm - sizeNm;
        dist += Math.abs(predicted - r.band.target);
        if (predicted < r.band.target) tight++;
      };
      const used = new Set<string>();
      for (const [ri, ci] of munkres(cost)) {
        const r = rows[ri]!;
        const c = columns[ci]!;
        taken.add(ci);
        let sizeNm: number;
        let source: ShimSource;
        if (c.kind === "private") {
          sizeNm = r.fallback.sizeNm;
          source = r.fallback.change ? { kind: "buy" } : { kind: "keep" };
          if (!r.fallback.inSpec) out++;
          else near(r, sizeNm);
          if (r.fallback.change) buys++;
        } else if (c.kind === "valve") {
          sizeNm = c.sizeNm;
          source = { kind: "valve", valveId: p.valves[c.rowIndex]!.id };
          near(r, sizeNm);
        } else if (c.kind === "club") {
          sizeNm = c.sizeNm;
          source = { kind: "club", ownerId: c.ownerId };
          near(r, sizeNm);
          borrows++;
          used.add(c.ownerId);
        } else {
          sizeNm = c.sizeNm;
          source = { kind: "tray" };
          near(r, sizeNm);
        }
        const predictedNm = r.gapNm - sizeNm;
        picked.push({
          row: r,
          assignment: {
            valveId: r.id,
            size: fromNm(sizeNm),
            predicted: fromNm(predictedNm),
            source,
            inSpec: inBand(predictedNm, r.spec),
            ideal: fromNm(r.fallback.idealNm),
          },
        });
      }
      const spare: number[] = [];
      columns.forEach((c, ci) => {
        if (c.kind === "valve" && !taken.has(ci)) spare.push(c.sizeNm);
      });
      // Each lender is a trip (to collect, and again to give back), weighed like one bought shim;
      // among plans equal on that, the one with fewer lenders. The order per aim:
      //   fewest-bought:  out of band, bought + lenders, lenders, bought, borrowed, distance
      //   nearest-target: out of band, distance, bought + lenders, lenders, bought, borrowed
      const l = used.size;
      const score =
        p.aim === "fewest-bought"
          ? [out, buys + l, l, buys, borrows, dist, tight]
          : [out, dist, buys + l, l, buys, borrows, tight];
      return { picked, spare, score, buys, lenders: l };
    };
    const better = (a: number[], b: number[]) => {
      const k = a.findIndex((x, i) => x !== b[i]);
      return k >= 0 && a[k]! < b[k]!;
    };

    // A lender's trip is a cost per lender, not per shim, which an assignment cannot carry: try the
    // sets of lenders by size. For a fixed set the assignment's order agrees with the score above
    // (borrowing from fewer of them only lowers the trips), so the best over all sets is exact.
    // A set of k lenders cannot beat the best found once that best is as good in the leading terms
    // as the plan with every lender and needs fewer trips than that plan's bought shims plus k.
    const owners = [...new Set(clubColumns.map((c) => c.ownerId))];
    // beyond 10 lenders with a useful shim (1,024 sets), the 10 with the most useful shims are asked
    const useful = owners
      .map((o) => ({ o, n: clubColumns.filter((c) => c.ownerId === o).length }))
      .sort((a, b) => b.n - a.n || a.o.localeCompare(b.o))
      .slice(0, MAX_LENDERS_TRIED)
      .map((x) => x.o)
      .sort();
    let best = solve(new Set());
    if (useful.length > 0) {
      const every = solve(new Set(useful));
      const lead = p.aim === "fewest-bought" ? 1 : 2;
      const sameLead = (s: number[]) => s.slice(0, lead).every((x, i) => x === every.score[i]);
      if (better(every.score, best.score)) best = every;
      const fetchAt = lead;
      for (let k = 1; k < useful.length; k++) {
        if (sameLead(best.score) && better([best.score[fetchAt]!, best.lenders], [every.buys + k, k])) break;
        for (const set of subsets(useful, k)) {
          const tried = solve(new Set(set));
          if (better(tried.score, best.score)) best = tried;
        }
      }
    }
    for (const { row, assignment } of best.picked) assignments[row.index] = assignment;
    outgoing.push(...best.spare);
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
    borrow: [...borrowed.values()]
      .sort((a, b) => a.sizeNm - b.sizeNm || a.ownerId.localeCompare(b.ownerId))
      .map((e) => ({ size: fromNm(e.sizeNm), count: e.count, ownerId: e.ownerId })),
    toTray: group(outgoing),
  };
}
