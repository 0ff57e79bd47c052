// Planner speed: 48 valves and 500 tray shims, time per plan, beside a general LP solver from npm
// (javascript-lp-solver) on the same assignment, in the same run. Prints figures; asserts nothing.
import solver from "javascript-lp-solver";
import { planShims, shimSeries, type PlanValve } from "../lib/lash/index";

const series = shimSeries(2.5, 3.3, 0.05);
let seed = 424242;
const rand = () => (seed = (seed * 1664525 + 1013904223) >>> 0) / 2 ** 32;

export function bigCase(valveCount = 48, trayCount = 500) {
  const valves: PlanValve[] = Array.from({ length: valveCount }, (_, i) => {
    const installed = series[2 + Math.floor(rand() * 12)]!;
    const spec = i % 2 ? { min: 0.2, max: 0.3 } : { min: 0.1, max: 0.2 };
    // most valves out of band so the planner has real work
    const measured = Math.round((spec.min - 0.08 + rand() * 0.3) * 1000) / 1000;
    return { id: `V${i}`, installed, measured: Math.max(0.02, measured), spec };
  });
  const tray = new Map<number, number>();
  for (let k = 0; k < trayCount; k++) {
    const s = series[Math.floor(rand() * series.length)]!;
    tray.set(s, (tray.get(s) ?? 0) + 1);
  }
  return { valves, sizes: series, tray: [...tray].map(([size, count]) => ({ size, count })) };
}

function lpPlan(input: ReturnType<typeof bigCase>) {
  const nm = (x: number) => Math.round(x * 1e6);
  const model = {
    optimize: "cost",
    opType: "min" as const,
    constraints: {} as Record<string, { equal?: number; max?: number }>,
    variables: {} as Record<string, Record<string, number>>,
  };
  const rows = input.valves.filter((v) => v.measured < v.spec.min || v.measured > v.spec.max);
  const sources = [
    ...rows.map((v) => ({ size: v.installed, cap: 1, from: v.id as string | null })),
    ...input.tray.map((t) => ({ size: t.size, cap: t.count, from: null })),
  ];
  sources.forEach((s, j) => (model.constraints[`s${j}`] = { max: s.cap }));
  for (const v of rows) {
    model.constraints[`v_${v.id}`] = { equal: 1 };
    const target = nm((v.spec.min + v.spec.max) / 2);
    const gap = nm(v.installed) + nm(v.measured);
    model.variables[`${v.id}_buy`] = { [`v_${v.id}`]: 1, cost: 1e6 };
    sources.forEach((s, j) => {
      const p = gap - nm(s.size);
      if (s.from === v.id || p < nm(v.spec.min) || p > nm(v.spec.max)) return;
      model.variables[`${v.id}_s${j}`] = { [`v_${v.id}`]: 1, [`s${j}`]: 1, cost: Math.abs(p - target) / 1000 };
    });
  }
  return solver.Solve(model);
}

function time(fn: () => unknown, minMs = 500) {
  const t0 = performance.now();
  let n = 0;
  do {
    fn();
    n++;
  } while (performance.now() - t0 < minMs);
  return (performance.now() - t0) / n;
}

export function runPlannerBench() {
  const input = bigCase();
  planShims(input); // warm up
  const plannerMs = time(() => planShims(input));
  const lpMs = time(() => lpPlan(input), 1);
  const plan = planShims(input);
  return {
    valves: input.valves.length,
    trayShims: input.tray.reduce((s, t) => s + t.count, 0),
    changing: plan.assignments.filter((a) => a.source.kind !== "keep").length,
    bought: plan.buy.reduce((s, b) => s + b.count, 0),
    plannerMs,
    lpMs,
    goalMs: 100,
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const r = runPlannerBench();
  console.log(
    `planner: ${r.valves} valves (${r.changing} need a change), ${r.trayShims} tray shims, ${r.bought} bought`,
  );
  console.log(`  planShims (Hungarian, munkres): ${r.plannerMs.toFixed(2)} ms per plan   goal <= ${r.goalMs} ms`);
  console.log(
    `  javascript-lp-solver, same LP:   ${r.lpMs.toFixed(1)} ms per plan   ratio ${(r.lpMs / r.plannerMs).toFixed(1)}x`,
  );
}
