// Where the time of a blade tap goes: a CPU profile (Chromium's sampling profiler over CDP) of taps
// on the measure step, offline, as `npm run bench` times them. Self time is summed per script and
// each script named by what it holds (React, Dexie, zod, the app), so a change aims at the real
// cost. `npm run bench:tap` (needs a production build, like npm run bench).
import { chromium } from "playwright-core";
import { CHROMIUM_ARGS } from "../tests/support/browser";
import { measuringPage, tapLoop } from "./browser.mts";
import { say, stage } from "./progress.mts";
import { startBenchServer, type BenchServer } from "./server.mts";

interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string };
  children?: number[];
}
interface Profile {
  nodes: ProfileNode[];
  samples: number[];
  timeDeltas: number[];
  startTime: number;
  endTime: number;
}

/** What a script holds, from strings only that library puts in its bundle. */
const KINDS: [string, RegExp][] = [
  ["Dexie (IndexedDB wrapper)", /Dexie|liveQuery/],
  ["zod (validation)", /ZodError|_zod/],
  ["React DOM", /react-dom|__reactFiber|unstable_scheduleCallback/],
  ["TanStack Query", /QueryClient|refetchOnWindowFocus/],
  ["Next runtime", /__NEXT|next-router|createMutableActionQueue/],
];

export async function profileTaps(srv: BenchServer, taps = 50, rate = 1) {
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: CHROMIUM_ARGS,
  });
  try {
    const { ctx, page } = await measuringPage(browser, srv, "profile");
    const cdp = await ctx.newCDPSession(page);
    await cdp.send("Emulation.setCPUThrottlingRate", { rate });
    await tapLoop(page, 16);
    await cdp.send("Profiler.enable");
    await cdp.send("Profiler.setSamplingInterval", { interval: 100 });
    await cdp.send("Profiler.start");
    const t0 = Date.now();
    const lat = await tapLoop(page, taps);
    const wall = Date.now() - t0;
    const { profile } = (await cdp.send("Profiler.stop")) as unknown as { profile: Profile };
    await ctx.setOffline(false);
    // self time per node, then per script and per function
    const self = new Map<number, number>();
    profile.samples.forEach((id, i) => self.set(id, (self.get(id) ?? 0) + (profile.timeDeltas[i] ?? 0) / 1000));
    const byNode = new Map(profile.nodes.map((n) => [n.id, n]));
    const byUrl = new Map<string, number>();
    const byFn = new Map<string, number>();
    for (const [id, ms] of self) {
      const n = byNode.get(id)!;
      const url = n.callFrame.url || n.callFrame.functionName;
      byUrl.set(url, (byUrl.get(url) ?? 0) + ms);
      const fn = `${n.callFrame.functionName || "(anonymous)"} @ ${url.split("/").pop()}`;
      byFn.set(fn, (byFn.get(fn) ?? 0) + ms);
    }
    const kindOf = new Map<string, string>();
    for (const url of byUrl.keys()) {
      if (!url.startsWith("http")) {
        kindOf.set(url, url);
        continue;
      }
      const text = await fetch(url.replace(/^https?:\/\/[^/]+/, srv.url))
        .then((r) => r.text())
        .catch(() => "");
      kindOf.set(url, KINDS.find(([, re]) => re.test(text))?.[0] ?? `app code (${url.split("/").pop()})`);
    }
    const byKind = new Map<string, number>();
    for (const [url, ms] of byUrl) byKind.set(kindOf.get(url)!, (byKind.get(kindOf.get(url)!) ?? 0) + ms);
    const per = (ms: number) => (ms / taps).toFixed(2);
    const sorted = [...lat].sort((a, b) => a - b);
    return {
      taps,
      rate,
      medianMs: sorted[Math.floor(taps / 2)]!,
      wallMsPerTap: wall / taps,
      byKind: [...byKind].sort((a, b) => b[1] - a[1]).map(([k, ms]) => ({ what: k, msPerTap: Number(per(ms)) })),
      topFunctions: [...byFn]
        .sort((a, b) => b[1] - a[1])
        .slice(0, 15)
        .map(([k, ms]) => ({ fn: k, msPerTap: Number(per(ms)) })),
    };
  } finally {
    await browser.close();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const srv = await stage("starting the production server and a throwaway database", startBenchServer);
  try {
    for (const rate of [1, 4]) {
      const p = await stage(`profiling 50 taps${rate > 1 ? `, CPU slowed ${rate}x` : ""}`, () =>
        profileTaps(srv, 50, rate),
      );
      say(`median ${p.medianMs.toFixed(1)} ms per tap; main-thread self time per tap, by script:`);
      for (const k of p.byKind) console.log(`  ${k.msPerTap.toFixed(2).padStart(7)} ms  ${k.what}`);
      console.log("  top functions:");
      for (const f of p.topFunctions) console.log(`  ${f.msPerTap.toFixed(2).padStart(7)} ms  ${f.fn}`);
    }
  } finally {
    await srv.stop();
  }
}
