// What `npm start` and `npm run cluster` both do around the database: the mail catcher, the photo
// store and the session key beside the data, migrations, the demo data and the build, the demo
// sign-ins printed, and a set-up problem said in one line.
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import {
  ensureDebianPackages,
  ensureNodeModules,
  log,
  runAsync,
  runTs,
  SetupError,
  startMailCatcher,
  startObjectStore,
} from "./setup.mjs";

/** The machine's packages and node_modules, and the data folder (made when missing). */
export function prepareMachine(packages, dataDir) {
  ensureDebianPackages(packages);
  ensureNodeModules();
  mkdirSync(dataDir, { recursive: true });
}

/**
 * The mail catcher and the photo store, with their data in `dataDir`, stopped by `cleanup`; and the
 * session signing key, kept with the data so that sign-ins survive a restart.
 */
export async function startSideServices(dataDir, cleanup) {
  const mail = await startMailCatcher({
    smtpPort: Number(process.env.SMTP_PORT ?? 1025),
    webPort: Number(process.env.MAIL_WEB_PORT ?? 1080),
    dir: path.join(dataDir, "mail"),
  });
  cleanup.add(mail.stop);
  const store = await startObjectStore({
    port: Number(process.env.S3_PORT ?? 4569),
    dir: path.join(dataDir, "photos"),
  });
  cleanup.add(store.stop);
  const secretFile = path.join(dataDir, "auth-secret");
  if (!existsSync(secretFile)) writeFileSync(secretFile, randomBytes(32).toString("base64url"), { mode: 0o600 });
  return { mail, store, secret: readFileSync(secretFile, "utf8").trim() };
}

/** Migrations and the demo data through `env`'s database, then `next build` (unless LASHWRIGHT_SKIP_BUILD=1). */
export async function migrateSeedBuild(env) {
  await runTs("db/migrate.ts", env);
  await runTs("db/seed.ts", env);
  if (process.env.LASHWRIGHT_SKIP_BUILD !== "1") {
    log("building the app (next build)...");
    await runAsync(process.execPath, ["node_modules/next/dist/bin/next", "build"], {
      env: { ...env, NEXT_TELEMETRY_DISABLED: "1" },
      what: "next build",
    });
  }
}

export async function logDemoSignIns() {
  const { DEMO_USERS, DEMO_PASSWORD } = await import("./demo-users.mjs");
  log(`demo sign-ins, password "${DEMO_PASSWORD}":`);
  for (const u of DEMO_USERS) log(`  ${u.email.padEnd(32)} ${u.says}`);
}

/** After everything started is stopped: a set-up problem is one line and exit 1, anything else is thrown. */
export function exitOnSetupError(e, what) {
  if (e instanceof SetupError) {
    console.error(`[lashwright] cannot start${what}: ${e.message}`);
    process.exit(1);
  }
  throw e;
}
