// `npm run bench`: every benchmark, a table at the end, and the figures as JSON in bench/results/.
// Each figure sits beside a baseline measured in the same run, since this machine is shared.
import { mkdirSync, writeFileSync } from "node:fs";
import { runPlannerBench } from "./planner.mts";
import { runSyncBench } from "./sync.mts";
import { runEntryBench, runWeightAndAudits } from "./browser.mts";
import { startBenchServer } from "./server.mts";
import { say, stage } from "./progress.mts";

const rows: { figure: string; value: string; baseline: string; goal: string; met: boolean }[] = [];

// `npm run bench -- sync` runs the sync stage alone (about a minute: no planner, browser or
// Lighthouse) and writes bench/results/sync.json; no argument runs everything, as before
const only = process.argv[2];
if (only !== undefined && only !== "sync") throw new Error(`unknown stage "${only}": npm run bench [-- sync]`);
const everything = only === undefined;

say(
  everything
    ? "npm run bench: about 4 minutes; each stage is named as it starts and ends"
    : "npm run bench -- sync: about a minute",
);
const p = everything ? await stage("planner: 48 valves + 500 tray shims, beside an LP solver", runPlannerBench) : null;
if (p)
  rows.push({
    figure: `planner, ${p.valves} valves + ${p.trayShims} tray shims`,
    value: `${p.plannerMs.toFixed(2)} ms/plan`,
    baseline: `LP solver ${p.lpMs.toFixed(1)} ms (${(p.lpMs / p.plannerMs).toFixed(0)}x slower)`,
    goal: `<= ${p.goalMs} ms`,
    met: p.plannerMs <= p.goalMs,
  });

const srv = await stage("starting the production server and a throwaway database", startBenchServer);
let sy: Awaited<ReturnType<typeof runSyncBench>>;
let entry: Awaited<ReturnType<typeof runEntryBench>> | null = null;
let web: Awaited<ReturnType<typeof runWeightAndAudits>> | null = null;
try {
  sy = await stage("sync: 10,000 readings pushed, beside a raw INSERT; then a full pull", () => runSyncBench(srv));
  if (everything) {
    entry = await stage("offline entry: blade taps in Chromium, beside a bare Dexie write", () => runEntryBench(srv));
    web = await stage("page weight and Lighthouse, beside a bare Next page built now", () => runWeightAndAudits(srv));
  }
} finally {
  say("stopping the server and database");
  await srv.stop();
}
rows.push({
  figure: `sync push, ${sy.mutations} readings in batches of ${sy.batch}`,
  value: `${Math.round(sy.pushRowsPerSec)} rows/s`,
  baseline: `raw multi-row INSERT ${Math.round(sy.rawRowsPerSec)} rows/s (ratio ${sy.ratio.toFixed(2)})`,
  goal: "ratio >= 0.5",
  met: sy.ratio >= 0.5,
});
const pushTable = sy.pushPhases.map((p) => `  ${p.name.padEnd(44)} ${p.ms.toFixed(2).padStart(7)} ms`).join("\n");
console.log(
  `where a push of ${sy.batch} readings spends its time (per push; a raw multi-row INSERT of the same rows: ${sy.rawMsPerBatch.toFixed(2)} ms):\n${pushTable}`,
);
rows.push({
  figure: `full pull, ${sy.pull.engines} engines / ${sy.pull.checks} checks / ${sy.pull.readings} readings`,
  value: `${Math.round(sy.pull.ms)} ms, ${(sy.pull.bytes / 1e6).toFixed(1)} MB`,
  baseline: "-",
  goal: "-",
  met: true,
});

// the browser stages ran only in a whole run
if (entry && web) {
  const ms = (x: number) => `${x.toFixed(1)} ms`;
  for (const rate of [1, 4]) {
    const a = entry.lat[`app x${rate}`]!;
    const b = entry.lat[`bare x${rate}`]!;
    // the goal: one frame at the median and 50 ms at p95; with the CPU slowed 4x, 100 ms at p95
    const goal = rate === 1 ? { median: 16, p95: 50 } : { median: Infinity, p95: 100 };
    rows.push({
      figure: `offline entry, tap to stored + shown, ${entry.taps} taps${rate > 1 ? `, CPU /${rate}` : ""}`,
      value: `median ${ms(a.median)}, p95 ${ms(a.p95)}`,
      baseline: `bare Dexie write: median ${ms(b.median)}, p95 ${ms(b.p95)}`,
      goal: rate === 1 ? `median <= ${goal.median} ms, p95 <= ${goal.p95} ms` : `p95 <= ${goal.p95} ms`,
      met: a.median <= goal.median && a.p95 <= goal.p95,
    });
  }
  const kb = (n: number) => `${(n / 1024).toFixed(1)} KiB`;
  // the same measure as the size budget in npm test (tests/e2e/page-weight.test.ts)
  for (const [name, w] of Object.entries(web.weight.pages)) {
    const ratio = w.bytes / web.weight.bare.bytes;
    rows.push({
      figure: `JavaScript on first visit to the ${name} page (compressed)`,
      value: `${kb(w.bytes)} in ${w.files} files`,
      baseline: `bare Next page ${kb(web.weight.bare.bytes)} (ratio ${ratio.toFixed(2)})`,
      goal: "ratio <= 1.3",
      met: ratio <= 1.3,
    });
  }
  rows.push({
    figure: "JavaScript of a signed-in visit to the check's measure step, nothing cached (compressed)",
    value: `${kb(web.weight.measure.bytes)} in ${web.weight.measure.files} files`,
    baseline: `bare Next page ${kb(web.weight.bare.bytes)} (ratio ${web.weight.measureRatio.toFixed(2)})`,
    goal: "ratio <= 1.3",
    met: web.weight.measureRatio <= 1.3,
  });
  const bare = web.audits.bare!;
  for (const page of ["home", "sign-in", "review", "check"] as const) {
    const s = web.audits[page]!;
    rows.push({
      figure: `Lighthouse 12.2.3 mobile, ${page} page (perf / a11y / best practices)`,
      value: `${s.performance} / ${s.accessibility} / ${s["best-practices"]}`,
      baseline: `bare page ${bare.performance} / ${bare.accessibility} / ${bare["best-practices"]}`,
      goal: "perf within 5 of bare, a11y 100, bp 100",
      met: s.performance >= bare.performance - 5 && s.accessibility === 100 && s["best-practices"] === 100,
    });
  }
}

const w = [0, 1, 2, 3].map((i) =>
  Math.max(
    ...rows.map((r) => Object.values(r)[i]!.toString().length),
    ["figure", "value", "baseline", "goal"][i]!.length,
  ),
);
const line = (cells: string[]) => cells.map((c, i) => c.padEnd(w[i]!)).join("  ");
console.log(line(["figure", "value", "baseline", "goal"]) + "  met");
for (const r of rows) console.log(line([r.figure, r.value, r.baseline, r.goal]) + `  ${r.met ? "yes" : "NO"}`);
mkdirSync("bench/results", { recursive: true });
const out = everything ? "bench/results/latest.json" : "bench/results/sync.json";
writeFileSync(out, JSON.stringify({ at: new Date().toISOString(), planner: p, sync: sy, entry, web, rows }, null, 2));
say(`figures written to ${out}`);
