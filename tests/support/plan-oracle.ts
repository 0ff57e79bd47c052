import type { PlanValve, ShimPlan } from "@/lib/lash";

/** The planner's oracle for tests: its objective, and exhaustive search over every plan. */
const nm = (mm: number) => Math.round(mm * 1e6);

/**
 * The plan's objective in the order the core promises: out of band, bought plus lenders (each lender
 * a trip), lenders, bought, borrowed, distance, tight.
 */
export function score(plan: ShimPlan, valves: PlanValve[]) {
  let out = 0;
  let buys = 0;
  let borrows = 0;
  let dist = 0;
  let tight = 0;
  const lenders = new Set<string>();
  for (const a of plan.assignments) {
    const v = valves.find((x) => x.id === a.valveId)!;
    const s = { ...v.spec, target: v.spec.target ?? (v.spec.min + v.spec.max) / 2 };
    if (!a.inSpec) out++;
    if (a.source.kind === "buy") buys++;
    if (a.source.kind === "club") {
      borrows++;
      lenders.add(a.source.ownerId);
    }
    if (a.source.kind !== "keep" && a.inSpec) {
      dist += Math.abs(nm(a.predicted) - nm(s.target));
      if (nm(a.predicted) < nm(s.target)) tight++;
    }
  }
  return [out, buys + lenders.size, lenders.size, buys, borrows, dist, tight] as const;
}

function lexLess(a: readonly number[], b: readonly number[]) {
  const k = a.findIndex((x, i) => x !== b[i]);
  return k >= 0 && a[k]! < b[k]!;
}

/**
 * A valve's own answer from the catalog, enumerated here rather than asked of the code under test
 * (README "The computation core" read literally): every size whose predicted clearance lands in the band,
 * nearest the target, the thinner on a tie; when none lands, the installed shim or the size nearest
 * the band that still leaves a clearance, the thinner on a tie.
 */
function catalogAnswer(v: PlanValve, sizes: number[]) {
  const lo = nm(v.spec.min);
  const hi = nm(v.spec.max);
  const target = nm(v.spec.target ?? (v.spec.min + v.spec.max) / 2);
  const gap = nm(v.installed) + nm(v.measured);
  const all = [...new Set(sizes.map(nm))].sort((a, b) => a - b).map((s) => ({ s, p: gap - s }));
  const landing = all.filter((c) => c.p >= lo && c.p <= hi);
  if (landing.length > 0) {
    // sorted thinnest first, so a strict "nearer" keeps the thinner of two equally near
    let best = landing[0]!;
    for (const c of landing) if (Math.abs(c.p - target) < Math.abs(best.p - target)) best = c;
    return { inSpec: true, change: best.s !== nm(v.installed), predicted: best.p / 1e6 };
  }
  const outside = (p: number) => (p < lo ? lo - p : p > hi ? p - hi : 0);
  const options = [{ s: nm(v.installed), p: nm(v.measured) }, ...all].filter((c) => c.p > 0);
  let best = options[0]!;
  for (const c of options)
    if (outside(c.p) < outside(best.p) || (outside(c.p) === outside(best.p) && c.s < best.s)) best = c;
  return { inSpec: false, change: best.s !== nm(v.installed), predicted: best.p / 1e6 };
}

/**
 * Exhaustive search over every way to give each valve that needs a change one shim: another such
 * valve's shim, one from the tray, or its own fallback (buy the catalog's best size, or keep the shim
 * when nothing in the catalog does better). Physical shims are used only where they land in the band.
 */
export function bruteForce(
  valves: PlanValve[],
  sizes: number[],
  tray: { size: number; count: number }[],
  club: { size: number; count: number; ownerId: string }[] = [],
) {
  const inBand = (p: number, v: PlanValve) => p >= nm(v.spec.min) && p <= nm(v.spec.max);
  const rows = valves.filter((v) => !inBand(nm(v.measured), v));
  const fallbacks = rows.map((v) => catalogAnswer(v, sizes));
  const pool: { size: number; from: string | null; club?: string }[] = [];
  rows.forEach((v, i) => {
    if (fallbacks[i]!.change) pool.push({ size: v.installed, from: v.id });
  });
  for (const t of tray) for (let k = 0; k < t.count; k++) pool.push({ size: t.size, from: null });
  for (const t of club) for (let k = 0; k < t.count; k++) pool.push({ size: t.size, from: null, club: t.ownerId });
  let best: readonly number[] | null = null;
  const used = new Array(pool.length).fill(false);
  const acc = [0, 0, 0, 0, 0];
  const lent = new Map<string, number>(); // lender -> shims taken from them on this path
  const walk = (i: number) => {
    if (i === rows.length) {
      const [out, buys, borrows, dist, tight] = acc as [number, number, number, number, number];
      const l = lent.size;
      const total = [out, buys + l, l, buys, borrows, dist, tight];
      if (!best || lexLess(total, best)) best = total;
      return;
    }
    const v = rows[i]!;
    const target = nm(v.spec.target ?? (v.spec.min + v.spec.max) / 2);
    const gap = nm(v.installed) + nm(v.measured);
    const add = (d: number[]) => d.forEach((x, k) => (acc[k]! += x));
    const sub = (d: number[]) => d.forEach((x, k) => (acc[k]! -= x));
    const f = fallbacks[i]!;
    const fd = f.inSpec
      ? [0, f.change ? 1 : 0, 0, Math.abs(nm(f.predicted) - target), nm(f.predicted) < target ? 1 : 0]
      : [1, f.change ? 1 : 0, 0, 0, 0];
    add(fd);
    walk(i + 1);
    sub(fd);
    const triedSizes = new Set<string>();
    pool.forEach((s, j) => {
      if (used[j] || s.from === v.id) return;
      const p = gap - nm(s.size);
      if (!inBand(p, v)) return;
      const key = `${s.size}|${s.club ? `club:${s.club}` : s.from === null ? "tray" : s.from}`;
      if (s.from === null && triedSizes.has(key)) return; // tray (or one lender's) copies of a size are interchangeable
      triedSizes.add(key);
      used[j] = true;
      if (s.club) lent.set(s.club, (lent.get(s.club) ?? 0) + 1);
      const d = [0, 0, s.club ? 1 : 0, Math.abs(p - target), p < target ? 1 : 0];
      add(d);
      walk(i + 1);
      sub(d);
      if (s.club) {
        const left = lent.get(s.club)! - 1;
        if (left) lent.set(s.club, left);
        else lent.delete(s.club);
      }
      used[j] = false;
    });
  };
  walk(0);
  return best!;
}
