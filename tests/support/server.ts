import { spawn, type ChildProcess } from "node:child_process";
import net from "node:net";
import path from "node:path";
import { OUTSIDE_MARK } from "@/db/write-path";

const root = path.resolve(__dirname, "../..");

export function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer();
    s.listen(0, "127.0.0.1", () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

/** A port nothing listens on (a free one, closed again): where a service that is down would be. */
export const closedPort = freePort;

export interface App {
  url: string;
  port: number;
  stop(): Promise<void>;
  restart(): Promise<void>;
  output(): string;
  /** the server process, for reading its memory from /proc */
  pid(): number;
  /** how the current server process ended: its exit code, or the signal that killed it */
  exited(): Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

// A child killed by a signal keeps exitCode null: look at signalCode too.
const ended = (c: ChildProcess) => c.exitCode !== null || c.signalCode !== null;

/**
 * The production build (made by npm test) served by `next start` on a free loopback port. Its pool
 * has one database connection unless a test asks for more (LASHWRIGHT_TEST_POOL_SIZE changes the
 * default): a request that asked for a second connection inside a transaction would then wait for
 * the one it holds, and fail its test with a 503, instead of passing on a roomy pool.
 */
export async function startApp(extraEnv: Record<string, string> = {}, opts: { port?: number } = {}): Promise<App> {
  // a given port lets a load balancer's configuration name the instance before it starts
  const port = opts.port ?? (await freePort());
  const url = `http://127.0.0.1:${port}`;
  let child: ChildProcess;
  let exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  let out = "";
  const boot = async () => {
    child = spawn(
      process.execPath,
      ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)],
      {
        cwd: root,
        env: {
          ...process.env,
          NODE_ENV: "production",
          NEXT_TELEMETRY_DISABLED: "1",
          NEXTAUTH_URL: url,
          DB_POOL_SIZE: process.env.LASHWRIGHT_TEST_POOL_SIZE ?? "1",
          // SIGTERM is the app's (server/drain.ts); no balancer to tell unless a test puts one in front
          NEXT_MANUAL_SIG_HANDLE: "1",
          SHUTDOWN_NOTICE_MS: "0",
          // every answer is checked against its route's contract (server/http.ts route())
          LASHWRIGHT_CHECK_CONTRACT: "1",
          // every record change must run on the one write path (db/write-path.ts): else a 500
          LASHWRIGHT_CHECK_WRITES: "1",
          ...extraEnv,
        },
        stdio: ["ignore", "pipe", "pipe"],
      },
    );
    const c = child;
    exited = new Promise((resolve) => c.once("exit", (code, signal) => resolve({ code, signal })));
    child.stdout!.on("data", (d) => (out += d));
    child.stderr!.on("data", (d) => (out += d));
    for (let i = 0; i < 300; i++) {
      if (ended(child)) throw new Error(`next start exited:\n${out}`);
      const ok = await fetch(`${url}/`)
        .then((r) => r.status < 500)
        .catch(() => false);
      if (ok) return;
      await new Promise((r) => setTimeout(r, 150));
    }
    throw new Error("next start did not answer");
  };
  // Bounded: a server that ignores SIGTERM is killed after 5 s, so a test never hangs on its stop.
  const end = () =>
    new Promise<void>((resolve) => {
      if (!child || ended(child)) return resolve();
      const kill = setTimeout(() => child.kill("SIGKILL"), 5000);
      child.once("exit", () => (clearTimeout(kill), resolve()));
      child.kill("SIGTERM");
    });
  // A write refused outside the write path fails the test that caused it even where the server
  // swallowed the error (a sweep, work after the commit): its log line is looked for at the stop.
  const stop = async () => {
    await end();
    const at = out.indexOf(OUTSIDE_MARK);
    if (at >= 0)
      throw new Error(
        `the server wrote outside the write path (the first, with its stack):\n${out.slice(at, at + 4000)}`,
      );
  };
  await boot();
  return {
    url,
    port,
    stop,
    restart: async () => (await stop(), await boot()),
    output: () => out,
    pid: () => child.pid!,
    exited: () => exited,
  };
}
