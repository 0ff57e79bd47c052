// A stand-in for `npm test` and `npm start` in the clean-up test: the same clean-up machinery, a
// service that ignores SIGTERM (wedged) and a running job (a test runner) that ignores it too.
import { cleanupOnExit, log, runAsync, spawnChild, stopChild } from "../../scripts/lib/setup.mjs";

const stubborn = "process.on('SIGTERM', () => {}); process.on('SIGINT', () => {}); setInterval(() => {}, 1000);";
const cleanup = cleanupOnExit();
const service = spawnChild(process.execPath, ["-e", stubborn], { stdio: "ignore" });
cleanup.add(() => stopChild(service, { graceMs: 4000 }));
log(`service ${service.pid}`);
const job = runAsync(process.execPath, ["-e", `${stubborn} console.log("job " + process.pid)`], { what: "job" });
if (process.argv[2] === "fail") {
  // a failing step: the caller's catch runs the clean-up, as start.mjs and test.mjs do
  setTimeout(async () => {
    await cleanup.runAll();
    process.exit(1);
  }, 500);
}
await job.catch(() => undefined);
