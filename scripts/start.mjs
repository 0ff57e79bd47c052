// `npm start`: everything from a fresh machine to the app with demo data on http://127.0.0.1:3000.
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import {
  CHROMIUM,
  cleanupOnExit,
  ended,
  startMailCatcher,
  startObjectStore,
  ensureDebianPackages,
  ensureNodeModules,
  log,
  MARIADB,
  portFree,
  root,
  runAsync,
  runTs,
  SetupError,
  spawnChild,
  startMariadb,
  stopChild,
} from "./lib/setup.mjs";

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
    ensureDebianPackages([MARIADB]);
    ensureNodeModules();
    mkdirSync(DATA_DIR, { recursive: true });
    const database = await startMariadb({ dir: DATA_DIR, port: DB_PORT });
    cleanup.add(() => database.stop());
    log(`database on 127.0.0.1:${DB_PORT} (data in ${path.relative(root, DATA_DIR)})`);
    const mail = await startMailCatcher({
      smtpPort: Number(process.env.SMTP_PORT ?? 1025),
      webPort: Number(process.env.MAIL_WEB_PORT ?? 1080),
      dir: path.join(DATA_DIR, "mail"),
    });
    cleanup.add(mail.stop);
    log(`mail catcher: every e-mail the app sends is at ${mail.apiUrl}`);
    const store = await startObjectStore({
      port: Number(process.env.S3_PORT ?? 4569),
      dir: path.join(DATA_DIR, "photos"),
    });
    cleanup.add(store.stop);
    // The session signing key lives with the data, so sign-ins survive a restart.
    const secretFile = path.join(DATA_DIR, "auth-secret");
    if (!existsSync(secretFile)) writeFileSync(secretFile, randomBytes(32).toString("base64url"), { mode: 0o600 });
    const env = {
      DATABASE_URL: database.url,
      NEXTAUTH_URL: `http://127.0.0.1:${PORT}`,
      NEXTAUTH_SECRET: readFileSync(secretFile, "utf8").trim(),
      SMTP_URL: mail.smtpUrl,
      ...store.env,
    };
    await runTs("db/migrate.ts", env);
    await runTs("db/seed.ts", env);
    if (process.env.LASHWRIGHT_SKIP_BUILD !== "1") {
      log("building the app (next build)...");
      await runAsync(process.execPath, ["node_modules/next/dist/bin/next", "build"], {
        env: { ...env, NEXT_TELEMETRY_DISABLED: "1" },
        what: "next build",
      });
    }
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
    const { DEMO_USERS, DEMO_PASSWORD } = await import("./lib/demo-users.mjs");
    log(`Lashwright is on http://127.0.0.1:${PORT}  (Ctrl-C stops the app and its database)`);
    log(`demo sign-ins, password "${DEMO_PASSWORD}":`);
    for (const u of DEMO_USERS) log(`  ${u.email.padEnd(32)} ${u.says}`);
    // The app ending on its own (a crash, or killed) takes the rest down with it.
    server.on("exit", async (code, signal) => {
      if (signal || code) log(`the app stopped (${signal ?? `exit ${code}`}); stopping the rest...`);
      await cleanup.runAll();
      process.exit(code ?? 1);
    });
    if (ended(server)) throw new SetupError("the app exited at start");
  } catch (e) {
    await cleanup.runAll();
    if (e instanceof SetupError) {
      console.error(`[lashwright] cannot start: ${e.message}`);
      process.exit(1);
    }
    throw e;
  }
}

main();
