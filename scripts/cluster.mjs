// `npm run cluster`: the app past one machine, on one machine. Three MariaDB nodes with Galera on
// loopback (data in .data/cluster/n1..n3), two app instances each talking to a different node,
// the mail catcher and the photo store; prints the addresses; Ctrl-C stops all of it. Data is kept
// between runs like `npm start` (the last node to stop starts the cluster again).
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { cleanupOnExit, ensureDebianPackages, ensureNodeModules, log, MARIADB, portFree, root, runAsync, runTs, SetupError, startMailCatcher, startObjectStore } from "./lib/setup.mjs";
import { clusterSpec, freePorts, GALERA, RSYNC, startCluster, stopCluster } from "./lib/galera.mjs";
import { startNext } from "./lib/next-server.mjs";

const PORT = Number(process.env.PORT ?? 3000);
const DB_PORT = Number(process.env.DB_PORT ?? 3326);
const DATA_DIR = path.resolve(root, process.env.LASHWRIGHT_DATA_DIR ?? ".data/cluster");

async function main() {
  const cleanup = cleanupOnExit();
  try {
    const appPorts = [PORT, PORT + 1];
    const dbPorts = [DB_PORT, DB_PORT + 1, DB_PORT + 2];
    for (const p of [...appPorts, ...dbPorts]) if (!Number.isInteger(p) || p < 1 || p > 65535 || !(await portFree(p))) throw new SetupError(`port ${p} is not free: choose others with PORT=4000 DB_PORT=4326 npm run cluster`);
    ensureDebianPackages([MARIADB, GALERA, RSYNC]);
    ensureNodeModules();
    mkdirSync(DATA_DIR, { recursive: true });
    const p = await freePorts(9);
    const spec = clusterSpec({ dir: DATA_DIR, sqlPorts: dbPorts, groupPorts: p.slice(0, 3), istPorts: p.slice(3, 6), sstPorts: p.slice(6) });
    log("starting three database nodes (Galera); a node joining for the first time copies the data, about 15 s each...");
    await startCluster(spec);
    cleanup.add(() => stopCluster(spec));
    log(`database nodes on 127.0.0.1:${dbPorts.join(", ")} (data in ${path.relative(root, DATA_DIR)})`);
    const mail = await startMailCatcher({ smtpPort: Number(process.env.SMTP_PORT ?? 1025), webPort: Number(process.env.MAIL_WEB_PORT ?? 1080), dir: path.join(DATA_DIR, "mail") });
    cleanup.add(mail.stop);
    const store = await startObjectStore({ port: Number(process.env.S3_PORT ?? 4569), dir: path.join(DATA_DIR, "photos") });
    cleanup.add(store.stop);
    // one signing key for both instances: a session made on one is good on the other
    const secretFile = path.join(DATA_DIR, "auth-secret");
    if (!existsSync(secretFile)) writeFileSync(secretFile, randomBytes(32).toString("base64url"), { mode: 0o600 });
    const shared = { NEXTAUTH_SECRET: readFileSync(secretFile, "utf8").trim(), SMTP_URL: mail.smtpUrl, ...store.env };
    const first = { ...shared, DATABASE_URL: spec.urls[0] };
    await runTs("db/migrate.ts", first);
    await runTs("db/seed.ts", first);
    if (process.env.LASHWRIGHT_SKIP_BUILD !== "1") {
      log("building the app (next build)...");
      await runAsync(process.execPath, ["node_modules/next/dist/bin/next", "build"], { env: { ...first, NEXT_TELEMETRY_DISABLED: "1" }, what: "next build" });
    }
    const apps = appPorts.map((port, i) => startNext(port, { ...shared, DATABASE_URL: spec.urls[i], NEXTAUTH_URL: `http://127.0.0.1:${port}` }, { inherit: true }));
    for (const a of apps) cleanup.add(a.stop);
    await Promise.all(apps.map((a) => a.ready));
    const { DEMO_USERS, DEMO_PASSWORD } = await import("./lib/demo-users.mjs");
    log(`app instance 1: http://127.0.0.1:${appPorts[0]}  (database node 1, 127.0.0.1:${dbPorts[0]})`);
    log(`app instance 2: http://127.0.0.1:${appPorts[1]}  (database node 2, 127.0.0.1:${dbPorts[1]})`);
    log(`database node 3: 127.0.0.1:${dbPorts[2]} (no app: a spare copy, as a third site would hold)`);
    log(`mail catcher: ${mail.apiUrl}; photo store: ${store.env.S3_ENDPOINT}`);
    log(`a sign-in on one instance is good on the other (same host, one signing key); demo sign-ins, password "${DEMO_PASSWORD}":`);
    for (const u of DEMO_USERS) log(`  ${u.email.padEnd(32)} ${u.says}`);
    log("Ctrl-C stops both instances, the three nodes, the mail catcher and the photo store");
    // an instance ending on its own (a crash, or killed) takes the rest down with it
    const how = await Promise.race(apps.map((a) => a.exited));
    log(`an app instance stopped (${how}); stopping the rest...`);
    await cleanup.runAll();
    process.exit(1);
  } catch (e) {
    await cleanup.runAll();
    if (e instanceof SetupError) {
      console.error(`[lashwright] cannot start the cluster: ${e.message}`);
      process.exit(1);
    }
    throw e;
  }
}

main();
