import { describe, expect, it } from "vitest";
import { spawn } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";

// The clean-up of `npm start`, `npm test` and `npm run bench` (scripts/lib/setup.mjs): whatever it
// started ends within 15 s of Ctrl-C, SIGTERM or a failure, even children that ignore SIGTERM.
const fixture = path.resolve(__dirname, "../../support/stop-fixture.mjs");

const alive = (pid: number) => {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
    return stat.slice(stat.lastIndexOf(")") + 2)[0] !== "Z";
  } catch {
    return false;
  }
};

async function run(arg: string | undefined, signal: ((pid: number) => void) | null) {
  const child = spawn(process.execPath, [fixture, ...(arg ? [arg] : [])], {
    stdio: ["ignore", "pipe", "pipe"],
    detached: true,
  });
  let out = "";
  child.stdout!.on("data", (d) => (out += d));
  child.stderr!.on("data", (d) => (out += d));
  const exited = new Promise<number | null>((r) => child.on("exit", (code) => r(code)));
  for (let i = 0; i < 400 && !/job \d+/.test(out); i++) await new Promise((r) => setTimeout(r, 50));
  const pids = [child.pid!, ...[...out.matchAll(/(?:service|job) (\d+)/g)].map((m) => Number(m[1]))];
  expect(pids).toHaveLength(3);
  const t0 = Date.now();
  signal?.(child.pid!);
  const code = await exited;
  while (Date.now() - t0 < 15_000 && pids.some(alive)) await new Promise((r) => setTimeout(r, 50));
  const left = pids.filter(alive);
  for (const p of left) process.kill(p, "SIGKILL");
  return { code, left, seconds: (Date.now() - t0) / 1000, out };
}

describe.concurrent("stopping what the scripts started", () => {
  it("Ctrl-C to the whole process group stops a wedged service and a running job within 15 s", async () => {
    const r = await run(undefined, (pid) => process.kill(-pid, "SIGINT"));
    expect(r.left).toEqual([]);
    expect(r.code).toBe(130);
    expect(r.seconds).toBeLessThan(15);
  }, 30_000);

  it("SIGTERM to the script alone stops them too", async () => {
    const r = await run(undefined, (pid) => process.kill(pid, "SIGTERM"));
    expect(r.left).toEqual([]);
    expect(r.code).toBe(143);
  }, 30_000);

  it("a failing step stops them", async () => {
    const r = await run("fail", null);
    expect(r.left).toEqual([]);
    expect(r.code).toBe(1);
  }, 30_000);
});
