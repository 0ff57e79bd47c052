// One `next start` of the production build on 127.0.0.1 (npm test's browser level, npm run cluster).
import { ended, root, SetupError, spawnChild, stopChild } from "./setup.mjs";

/** Returns { ready, exited, stop }; stop is bounded (SIGTERM to its group, then a kill). */
export function startNext(port, env, { inherit = false } = {}) {
  const child = spawnChild(
    process.execPath,
    ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)],
    {
      cwd: root,
      stdio: inherit ? ["ignore", "inherit", "inherit"] : ["ignore", "pipe", "pipe"],
      // NEXT_MANUAL_SIG_HANDLE: SIGTERM is the app's (server/drain.ts: not ready, finish, exit in a bound)
      env: {
        ...process.env,
        ...env,
        NODE_ENV: "production",
        NEXT_TELEMETRY_DISABLED: "1",
        NEXT_MANUAL_SIG_HANDLE: "1",
      },
    },
  );
  let out = "";
  child.stdout?.on("data", (d) => (out += d));
  child.stderr?.on("data", (d) => (out += d));
  const exited = new Promise((resolve) => child.once("exit", (code, signal) => resolve(signal ?? code)));
  const ready = (async () => {
    for (let i = 0; i < 300; i++) {
      if (ended(child)) throw new SetupError(`next start on port ${port} exited early:\n${out.slice(-2000)}`);
      try {
        const res = await fetch(`http://127.0.0.1:${port}/`);
        if (res.status < 500) return;
      } catch {
        /* not listening yet */
      }
      await new Promise((r) => setTimeout(r, 200));
    }
    throw new SetupError(`next start on port ${port} did not answer within 60 s`);
  })();
  const stop = () => stopChild(child, { graceMs: 4000 });
  return { ready, exited, stop };
}
