// `npm run bench`: every benchmark, a table at the end, and the figures as JSON in bench/results/.
// Each figure sits beside a baseline measured in the same run, since this machine is shared.
import { mkdirSync, writeFileSync } from "node:fs";
import { runPlannerBench } from "./planner.mts";
import { runSyncBench } from "./sync.mts";

const rows: { figure: string; value: string; baseline: string; goal: string; met: boolean }[] = [];

const p = runPlannerBench();
rows.push({
  figure: `planner, ${p.valves} valves + ${p.trayShims} tray shims`,
  value: `${p.plannerMs.toFixed(2)} ms/plan`,
  baseline: `LP solver ${p.lpMs.toFixed(1)} ms (${(p.lpMs / p.plannerMs).toFixed(0)}x slower)`,
  goal: `<= ${p.goalMs} ms`,
  met: p.plannerMs <= p.goalMs,
});

const sy = await runSyncBench();
rows.push({
  figure: `sync push, ${sy.mutations} readings in batches of ${sy.batch}`,
  value: `${Math.round(sy.pushRowsPerSec)} rows/s`,
  baseline: `raw multi-row INSERT ${Math.round(sy.rawRowsPerSec)} rows/s (ratio ${sy.ratio.toFixed(2)})`,
  goal: "ratio >= 0.5",
  met: sy.ratio >= 0.5,
});
rows.push({
  figure: `full pull, ${sy.pull.engines} engines / ${sy.pull.checks} checks / ${sy.pull.readings} readings`,
  value: `${Math.round(sy.pull.ms)} ms, ${(sy.pull.bytes / 1e6).toFixed(1)} MB`,
  baseline: "-",
  goal: "-",
  met: true,
});

const w = [0, 1, 2, 3].map((i) => Math.max(...rows.map((r) => Object.values(r)[i]!.toString().length), ["figure", "value", "baseline", "goal"][i]!.length));
const line = (cells: string[]) => cells.map((c, i) => c.padEnd(w[i]!)).join("  ");
console.log(line(["figure", "value", "baseline", "goal"]) + "  met");
for (const r of rows) console.log(line([r.figure, r.value, r.baseline, r.goal]) + `  ${r.met ? "yes" : "NO"}`);
mkdirSync("bench/results", { recursive: true });
writeFileSync("bench/results/latest.json", JSON.stringify({ at: new Date().toISOString(), planner: p, sync: sy, rows }, null, 2));
