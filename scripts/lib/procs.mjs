// Child processes of `npm start`, `npm test`, `npm run bench`: each is started in a process group of
// its own and stopped with a bound. Written by hand because the parts are small and Node has them:
// process groups (detached + kill(-pid)) and timers; a package would add a dependency before
// node_modules exists (these scripts install it).
import { spawn } from "node:child_process";

const live = new Set();
// commands run to their end (build, migrations, test runners): stopped first, before the services
const jobs = new Set();

/** True once the child has ended, by an exit code or by a signal (then exitCode stays null). */
export function ended(child) {
  return child.exitCode !== null || child.signalCode !== null;
}

/**
 * spawn() in a new process group, so that stopping it reaches what it started (next's workers,
 * vitest's servers), and so a terminal's Ctrl-C reaches only us and we stop things in order (the
 * app before its database).
 */
export function spawnChild(cmd, args, opts = {}) {
  const child = spawn(cmd, args, { ...opts, detached: true });
  live.add(child);
  child.once("exit", () => live.delete(child));
  child.once("error", () => live.delete(child));
  return child;
}

function signalGroup(child, sig) {
  try {
    process.kill(-child.pid, sig);
  } catch {
    try {
      child.kill(sig);
    } catch {
      /* already gone */
    }
  }
}

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

/**
 * Ask the child's group to stop with `signal`; after `graceMs` kill it. Resolves once it has
 * ended, or after the kill and one more second: a stop never waits without a bound, even on a
 * wedged (stopped, deadlocked) process.
 */
export async function stopChild(child, { signal = "SIGTERM", graceMs = 5000 } = {}) {
  if (!child || child.pid === undefined) return;
  if (ended(child)) {
    signalGroup(child, "SIGKILL"); // anything it left behind in its group
    return;
  }
  const exit = new Promise((r) => child.once("exit", r));
  signalGroup(child, signal);
  if (await Promise.race([exit.then(() => true), sleep(graceMs).then(() => false)])) {
    signalGroup(child, "SIGKILL");
    return;
  }
  signalGroup(child, "SIGKILL");
  await Promise.race([exit, sleep(1000)]);
}

/** Kill every child still running, at once: the last resort when the clean-up's time is up. */
export function killAll() {
  for (const child of live) signalGroup(child, "SIGKILL");
}

/** The pids of the children still running (for messages and tests). */
export function livePids() {
  return [...live].filter((c) => !ended(c)).map((c) => c.pid);
}

/** Stop the running jobs (a build, a test runner) before the services they use. */
export function stopJobs(graceMs = 3000) {
  return Promise.all([...jobs].map((c) => stopChild(c, { graceMs })));
}

/** Run a command to its end without blocking the event loop (so Ctrl-C is heard during a build). */
export function runChild(cmd, args, { cwd, env, what, quiet = false } = {}) {
  return new Promise((resolve, reject) => {
    const child = spawnChild(cmd, args, {
      cwd,
      env,
      stdio: quiet ? ["ignore", "pipe", "pipe"] : ["ignore", "inherit", "inherit"],
    });
    jobs.add(child);
    child.once("exit", () => jobs.delete(child));
    let out = "";
    if (quiet) {
      child.stdout.on("data", (d) => (out += d));
      child.stderr.on("data", (d) => (out += d));
    }
    child.once("error", (e) =>
      reject(Object.assign(new Error(`${what ?? cmd} could not be run: ${e.message}`), { setup: true })),
    );
    child.once("exit", (code, signal) => {
      if (code === 0) return resolve(out);
      const detail = quiet ? `\n${out.trim().split("\n").slice(-8).join("\n")}` : "";
      reject(
        Object.assign(
          new Error(
            `${what ?? `${cmd} ${args.join(" ")}`} failed (${signal ? `stopped by ${signal}` : `exit ${code}`})${detail}`,
          ),
          { setup: true },
        ),
      );
    });
  });
}
