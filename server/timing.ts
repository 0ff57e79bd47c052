import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import { env } from "@/lib/env";

/**
 * Where a request's milliseconds go, for `npm run bench`: `phase(name)` closes a phase (the time
 * since the previous one), and `timed(handler)` answers with the phases as a Server-Timing header
 * (W3C Server Timing). Only when LASHWRIGHT_SERVER_TIMING=1: otherwise nothing is measured, and a
 * phase call costs one AsyncLocalStorage lookup. A phase named twice (one per run of readings) is
 * summed by the reader.
 */
interface Clock {
  last: number;
  phases: [string, number][];
}
const clocks = new AsyncLocalStorage<Clock>();

export function phase(name: string): void {
  const c = clocks.getStore();
  if (!c) return;
  const now = performance.now();
  c.phases.push([name, now - c.last]);
  c.last = now;
}

export function timed<A extends unknown[]>(
  handler: (...args: A) => Promise<Response>,
): (...args: A) => Promise<Response> {
  return async (...args: A) => {
    if (env().LASHWRIGHT_SERVER_TIMING !== "1") return handler(...args);
    const clock: Clock = { last: performance.now(), phases: [] };
    const res = await clocks.run(clock, () => handler(...args));
    phase("answer");
    res.headers.set("Server-Timing", clock.phases.map(([n, d]) => `${n};dur=${d.toFixed(3)}`).join(", "));
    return res;
  };
}
