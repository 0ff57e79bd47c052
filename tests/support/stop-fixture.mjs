// A stand-in for `npm test` and `npm start` in the clean-up test: the same clean-up machinery, a
// service that ignores SIGTERM (wedged) and a running job (a test runner) that ignores it too.
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { cleanupOnExit, livePids, log, runAsync, spawnChild, stopChild } from "../../scripts/lib/setup.mjs";

// each child leaves a file once its handlers are in place, so the test signals truly wedged children
const marks = mkdtempSync(path.join(tmpdir(), "stop-fixture-"));
process.on("exit", () => rmSync(marks, { recursive: true, force: true }));
const stubborn = `process.on('SIGTERM', () => {}); process.on('SIGINT', () => {}); require('fs').writeFileSync(require('path').join(${JSON.stringify(marks)}, String(process.pid)), ''); setInterval(() => {}, 1000);`;
const cleanup = cleanupOnExit();
const service = spawnChild(process.execPath, ["-e", stubborn], { stdio: "ignore" });
cleanup.add(() => stopChild(service, { graceMs: 4000 }));
const job = runAsync(process.execPath, ["-e", stubborn], { what: "job" });
const jobPid = livePids().find((p) => p !== service.pid);
while (![service.pid, jobPid].every((p) => existsSync(path.join(marks, String(p)))))
  await new Promise((r) => setTimeout(r, 20));
log(`service ${service.pid}`);
log(`job ${jobPid}`);
if (process.argv[2] === "fail") {
  // a failing step: the caller's catch runs the clean-up, as start.mjs and test.mjs do
  setTimeout(async () => {
    await cleanup.runAll();
    process.exit(1);
  }, 200);
}
await job.catch(() => undefined);
