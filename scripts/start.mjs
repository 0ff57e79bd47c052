// `npm start`: everything from a fresh machine to the app with demo data on http://127.0.0.1:3000.
import path from "node:path";
import {
  CHROMIUM,
  cleanupOnExit,
  ended,
  log,
  MARIADB,
  portFree,
  root,
  SetupError,
  spawnChild,
  startMariadb,
  stopChild,
} from "./lib/setup.mjs";
import * as localRun from "./lib/local-run.mjs";

const PORT = Number(process.env.PORT ?? 3000);
const DB_PORT = Number(process.env.DB_PORT ?? 3316);
const DATA_DIR = path.resolve(root, process.env.LASHWRIGHT_DATA_DIR ?? ".data/dev");

async function main() {
  const cleanup = cleanupOnExit();
  try {
    if (!Number.isInteger(PORT) || PORT < 1 || PORT > 65535)
      throw new SetupError(`PORT=${process.env.PORT} is not a port number`);
    if (!(await portFree(PORT)))
      throw new SetupError(
        `port ${PORT} is in use: stop what holds it, or start on another port with PORT=3001 npm start`,
      );
    void CHROMIUM; // browsers are only needed by npm test
    localRun.prepareMachine([MARIADB], DATA_DIR);
    const database = await startMariadb({ dir: DATA_DIR, port: DB_PORT });
    cleanup.add(() => database.stop());
    log(`database on 127.0.0.1:${DB_PORT} (data in ${path.relative(root, DATA_DIR)})`);
    const { mail, store, secret } = await localRun.startSideServices(DATA_DIR, cleanup);
    log(`mail catcher: every e-mail the app sends is at ${mail.apiUrl}`);
    const env = {
      DATABASE_URL: database.url,
      NEXTAUTH_URL: `http://127.0.0.1:${PORT}`,
      NEXTAUTH_SECRET: secret,
      SMTP_URL: mail.smtpUrl,
      ...store.env,
    };
    await localRun.migrateSeedBuild(env);
    const server = spawnChild(
      process.execPath,
      ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(PORT)],
      {
        cwd: root,
        stdio: ["ignore", "inherit", "inherit"],
        env: {
          // no load balancer to tell before closing (server/drain.ts), unless said otherwise
          SHUTDOWN_NOTICE_MS: "0",
          ...process.env,
          ...env,
          NODE_ENV: "production",
          NEXT_TELEMETRY_DISABLED: "1",
          // SIGTERM is the app's (server/drain.ts: not ready, finish what is in flight, exit in a bound)
          NEXT_MANUAL_SIG_HANDLE: "1",
        },
      },
    );
    cleanup.add(() => stopChild(server, { graceMs: 4000 }));
    log(`Lashwright is on http://127.0.0.1:${PORT}  (Ctrl-C stops the app and its database)`);
    await localRun.logDemoSignIns();
    // The app ending on its own (a crash, or killed) takes the rest down with it.
    server.on("exit", async (code, signal) => {
      if (signal || code) log(`the app stopped (${signal ?? `exit ${code}`}); stopping the rest...`);
      await cleanup.runAll();
      process.exit(code ?? 1);
    });
    if (ended(server)) throw new SetupError("the app exited at start");
  } catch (e) {
    await cleanup.runAll();
    localRun.exitOnSetupError(e, "");
  }
}

main();
