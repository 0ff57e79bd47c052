// `npm run cluster`: the app past one machine, on one machine. Three MariaDB nodes with Galera on
// loopback (data in .data/cluster/n1..n3), two app instances, HAProxy in front of them (the one
// address phones use) and between each instance and the nodes (an instance's database connections
// move to another node when its own leaves the cluster), the mail catcher and the photo store; prints
// the addresses; Ctrl-C stops all of it. An instance that ends on its own is started again. Data is
// kept between runs like `npm start` (the last node to stop starts the cluster again).
import path from "node:path";
import { cleanupOnExit, log, MARIADB, portFree, root, SetupError } from "./lib/setup.mjs";
import * as localRun from "./lib/local-run.mjs";
import { clusterSpec, freePorts, GALERA, RSYNC, startCluster, stopCluster } from "./lib/galera.mjs";
import { HAPROXY, HEALTH_PATH, startHaproxy } from "./lib/haproxy.mjs";
import { startNext } from "./lib/next-server.mjs";

const PORT = Number(process.env.PORT ?? 3000);
const DB_PORT = Number(process.env.DB_PORT ?? 3326);
const DATA_DIR = path.resolve(root, process.env.LASHWRIGHT_DATA_DIR ?? ".data/cluster");
/** an instance that ends more often than this within a minute is left down (a crash loop helps nobody) */
const RESTARTS_PER_MINUTE = 5;

/**
 * Keep one app instance running: started again a second after it ends, unless it keeps ending.
 * HAProxy takes it out while it is down (its check fails) and back once it answers.
 */
function supervise(name, port, env) {
  let current = startNext(port, env, { inherit: true });
  let stopping = false;
  const ends = [];
  const watch = () =>
    current.exited.then((how) => {
      if (stopping) return;
      ends.push(Date.now());
      while (ends.length && ends[0] < Date.now() - 60_000) ends.shift();
      if (ends.length > RESTARTS_PER_MINUTE)
        return log(`${name} ended ${ends.length} times within a minute (last: ${how}); left down`);
      log(`${name} ended (${how}); starting it again`);
      setTimeout(() => {
        if (stopping) return;
        current = startNext(port, env, { inherit: true });
        current.ready.then(
          () => log(`${name} is back`),
          (e) => log(`${name} did not come back: ${e.message}`),
        );
        watch();
      }, 1000);
    });
  watch();
  return {
    ready: () => current.ready,
    stop: async () => {
      stopping = true;
      await current.stop();
    },
  };
}

async function main() {
  const cleanup = cleanupOnExit();
  try {
    // the phones' address, then the two instances and HAProxy's own page
    const appPorts = [PORT + 1, PORT + 2];
    const statsPort = PORT + 9;
    const dbPorts = [DB_PORT, DB_PORT + 1, DB_PORT + 2];
    for (const p of [PORT, ...appPorts, statsPort, ...dbPorts])
      if (!Number.isInteger(p) || p < 1 || p > 65535 || !(await portFree(p)))
        throw new SetupError(`port ${p} is not free: choose others with PORT=4000 DB_PORT=4326 npm run cluster`);
    localRun.prepareMachine([MARIADB, GALERA, RSYNC, HAPROXY], DATA_DIR);
    const p = await freePorts(11);
    const spec = clusterSpec({
      dir: DATA_DIR,
      sqlPorts: dbPorts,
      groupPorts: p.slice(0, 3),
      istPorts: p.slice(3, 6),
      sstPorts: p.slice(6),
    });
    log(
      "starting three database nodes (Galera); a node joining for the first time copies the data, about 15 s each...",
    );
    await startCluster(spec);
    cleanup.add(() => stopCluster(spec));
    log(`database nodes on 127.0.0.1:${dbPorts.join(", ")} (data in ${path.relative(root, DATA_DIR)})`);
    const { mail, store, secret } = await localRun.startSideServices(DATA_DIR, cleanup);
    // one signing key for both instances: a session made on one is good on the other
    const shared = { NEXTAUTH_SECRET: secret, SMTP_URL: mail.smtpUrl, ...store.env };
    await localRun.migrateSeedBuild({ ...shared, DATABASE_URL: spec.urls[0] });
    // each instance's own database address: HAProxy's TCP listener that prefers node i
    const proxy = await startHaproxy({
      dir: path.join(DATA_DIR, "haproxy"),
      frontPort: PORT,
      apps: appPorts.map((port, i) => ({ name: `app${i + 1}`, port })),
      db: {
        nodes: spec.nodes.map((n) => ({ name: n.name, port: n.port })),
        listeners: appPorts.map((_, i) => ({ port: p[9 + i], prefer: i })),
        user: spec.user,
        password: spec.password,
        database: spec.database,
      },
      statsPort,
      echo: true,
    });
    cleanup.add(proxy.stop);
    // every instance signs links and checks Origin against the one address phones use; HAProxy adds
    // one X-Forwarded-For entry, the only one the app believes
    const apps = appPorts.map((port, i) =>
      supervise(`app instance ${i + 1}`, port, {
        ...shared,
        DATABASE_URL: proxy.dbUrls[i],
        NEXTAUTH_URL: proxy.url,
        TRUSTED_PROXIES: "1",
      }),
    );
    for (const a of apps) cleanup.add(a.stop);
    await Promise.all(apps.map((a) => a.ready()));
    await proxy.waitUp(["app/app1", "app/app2"]);
    log(
      `the app, for phones and browsers: ${proxy.url}  (HAProxy; checks ${HEALTH_PATH} on each instance every second)`,
    );
    for (const [i, port] of appPorts.entries())
      log(
        `  app instance ${i + 1}: http://127.0.0.1:${port}, database through 127.0.0.1:${p[9 + i]} (node ${i + 1} first, then the others)`,
      );
    log(`HAProxy's page (which instance and node is up): ${proxy.statsUrl}`);
    log(`database nodes: 127.0.0.1:${dbPorts.join(", ")} (data in ${path.relative(root, DATA_DIR)})`);
    log(`mail catcher: ${mail.apiUrl}; photo store: ${store.env.S3_ENDPOINT}`);
    await localRun.logDemoSignIns();
    log(
      "an instance that ends is started again; Ctrl-C stops HAProxy, both instances, the three nodes, the mail catcher and the photo store",
    );
    await new Promise(() => {});
  } catch (e) {
    await cleanup.runAll();
    localRun.exitOnSetupError(e, " the cluster");
  }
}

main();
