// The production server the benchmarks measure: a throwaway MariaDB, mail catcher and photo store,
// migrated, and `next start` on the existing build (npm test or next build makes it).
import { existsSync, rmSync } from "node:fs";
import path from "node:path";
import bcrypt from "bcryptjs";
import mysql from "mysql2/promise";
// prettier-ignore
// @ts-expect-error plain JS set-up module shared with npm start and npm test
import { freePort, root, runTs, spawnChild, startMariadb, startMailCatcher, startObjectStore, stopChild } from "../scripts/lib/setup.mjs";

export interface BenchServer {
  url: string;
  dbUrl: string;
  makeUser(tag: string): Promise<{ id: string; email: string; password: string }>;
  stop(): Promise<void>;
}

/** Waits (up to 200 tries, 150 ms apart) until `next start` at url answers its home page with 2xx. */
export async function waitForPage(url: string) {
  for (
    let i = 0;
    i < 200 &&
    !(await fetch(url)
      .then((r) => r.ok)
      .catch(() => false));
    i++
  )
    await new Promise((r) => setTimeout(r, 150));
}

/** distDir: another build beside the usual one (LASHWRIGHT_DIST_DIR), served from its own database */
export async function startBenchServer({ distDir = ".next" } = {}): Promise<BenchServer> {
  if (!existsSync(path.join(root, distDir, "BUILD_ID")))
    throw new Error("no production build: run npm test (or next build) first");
  const dir = path.join(root, ".data", distDir === ".next" ? "bench" : `bench${distDir}`);
  rmSync(dir, { recursive: true, force: true });
  const stops: (() => Promise<void>)[] = [];
  const stop = async () => {
    for (const s of stops.reverse()) await s().catch(() => undefined);
    rmSync(dir, { recursive: true, force: true });
  };
  try {
    const db = await startMariadb({ dir, port: await freePort(), database: "lashwright_bench" });
    stops.push(() => db.stop());
    const mail = await startMailCatcher({
      smtpPort: await freePort(),
      webPort: await freePort(),
      dir: path.join(dir, "mail"),
    });
    stops.push(() => mail.stop());
    const store = await startObjectStore({ port: await freePort(), dir: path.join(dir, "photos") });
    stops.push(() => store.stop());
    const env = {
      ...store.env,
      DATABASE_URL: db.url,
      SMTP_URL: mail.smtpUrl,
      NEXTAUTH_SECRET: "bench-secret-bench-secret-bench-secret-0123",
      SYNC_WRITES_PER_MINUTE: "10000000",
      LASHWRIGHT_SERVER_TIMING: "1",
      LASHWRIGHT_DIST_DIR: distDir,
    };
    await runTs("db/migrate.ts", env);
    const port = await freePort();
    const url = `http://127.0.0.1:${port}`;
    const server = spawnChild(
      process.execPath,
      ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)],
      { cwd: root, env: { ...process.env, ...env, NODE_ENV: "production", NEXTAUTH_URL: url }, stdio: "ignore" },
    );
    stops.push(() => stopChild(server, { graceMs: 4000 }));
    await waitForPage(url);
    const makeUser = async (tag: string) => {
      const c = await mysql.createConnection({ uri: db.url });
      const id = crypto.randomUUID();
      const email = `${tag}-${id.slice(0, 6)}@bench.example`;
      await c.query(
        "INSERT INTO users (id, email, name, password_hash, email_verified_at) VALUES (?, ?, ?, ?, NOW(3))",
        [id, email, tag, await bcrypt.hash("bench-password-1", 4)],
      );
      await c.end();
      return { id, email, password: "bench-password-1" };
    };
    return { url, dbUrl: db.url as string, makeUser, stop };
  } catch (e) {
    await stop();
    throw e;
  }
}
