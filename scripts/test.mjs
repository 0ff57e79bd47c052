// `npm test`: set up everything (npm packages, MariaDB, Chromium, the mail catcher), then typecheck,
// lint, unit tests, a production build, integration tests over HTTP against it on a throwaway
// MariaDB, and browser tests in real Chromium. Every process it starts is stopped again, also when a
// step fails; the exit status is the result, and the last line reads "N passed, N failed".
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, rmSync } from "node:fs";
import path from "node:path";
import { GALERA, RSYNC, startTestCluster } from "./lib/galera.mjs";
import { HAPROXY } from "./lib/haproxy.mjs";
import { startNext } from "./lib/next-server.mjs";
import {
  CHROMIUM,
  POPPLER,
  cleanupOnExit,
  ensureDebianPackages,
  ensureNodeModules,
  freePort,
  log,
  MARIADB,
  root,
  runAsync,
  runTs,
  SetupError,
  startMailCatcher,
  startMariadb,
  startObjectStore,
} from "./lib/setup.mjs";

const args = process.argv.slice(2);
// `npm run soak`: the fault-injection sync test alone, with 10,000 mutations
const soak = args.includes("soak");
// `npm run load`: the club-night load test alone, with 300 phones and a minute of steady work
const load = args.includes("load");
// `npm run load -- --cluster`: the club night on the cluster, through HAProxy, with machines lost
const clusterLoad = load && args.includes("--cluster");
// `npm run test:fast`: unit tests, then the appliers and access rules against a real MariaDB
// (tests/integration/db), with no build, browser or mail: a change checked in about a minute
const fast = args.includes("fast");
const LEVELS = ["unit", "integration", "e2e", "cluster"];
const only = fast
  ? "fast"
  : clusterLoad
    ? "cluster"
    : soak || load
      ? "integration"
      : args.find((a) => LEVELS.includes(a));
// anything else narrows the chosen level to matching test files (vitest filters)
const filters = soak
  ? ["tests/integration/sync/faults"]
  : clusterLoad
    ? ["tests/cluster/club-night"]
    : load
      ? ["tests/integration/load"]
      : args.filter((a) => !LEVELS.includes(a) && a !== "fast" && a !== "--cluster");
const results = { passed: 0, failed: 0, skipped: 0 };
const failures = [];

async function stage(name, fn) {
  log(`── ${name}`);
  try {
    await fn();
    return true;
  } catch (e) {
    failures.push(name);
    console.error(`[lashwright] ${name} failed${e instanceof SetupError ? `: ${e.message}` : ""}`);
    return false;
  }
}

/** Run one vitest project and add its counts (from its JSON report) to the totals. */
async function vitest(project, env, fileFilters = filters) {
  const report = path.join(root, "test-results", `${project}.json`);
  rmSync(report, { force: true });
  const ok = await stage(`${project} tests`, () =>
    runAsync(
      process.execPath,
      [
        "node_modules/vitest/vitest.mjs",
        "run",
        "--project",
        project,
        "--reporter=default",
        "--reporter=json",
        `--outputFile.json=${report}`,
        ...fileFilters,
      ],
      {
        env: soak
          ? { ...env, LASHWRIGHT_FAULT_MUTATIONS: process.env.LASHWRIGHT_FAULT_MUTATIONS ?? "10000" }
          : load
            ? {
                ...env,
                LASHWRIGHT_LOAD_PHONES: process.env.LASHWRIGHT_LOAD_PHONES ?? "300",
                LASHWRIGHT_LOAD_SUSTAIN_SECONDS: process.env.LASHWRIGHT_LOAD_SUSTAIN_SECONDS ?? "60",
              }
            : env,
        what: `vitest ${project}`,
      },
    ),
  );
  if (existsSync(report)) {
    const r = JSON.parse(readFileSync(report, "utf8"));
    results.passed += r.numPassedTests;
    results.failed += r.numFailedTests;
    results.skipped += r.numPendingTests + r.numTodoTests;
    if (r.numTotalTests === 0) failures.push(`${project}: no tests ran`);
  } else if (!ok) results.failed += 1;
}

async function main() {
  const cleanup = cleanupOnExit();
  const t0 = Date.now();
  try {
    ensureDebianPackages([MARIADB, CHROMIUM, POPPLER, GALERA, RSYNC, HAPROXY]);
    ensureNodeModules();
    mkdirSync(path.join(root, "test-results"), { recursive: true });

    if (!only) {
      await stage("typecheck (tsc --noEmit)", () =>
        runAsync(process.execPath, ["node_modules/typescript/bin/tsc", "--noEmit"], { what: "tsc" }),
      );
      await stage("lint (eslint)", () =>
        runAsync(process.execPath, ["node_modules/eslint/bin/eslint.js", ".", "--max-warnings=0"], { what: "eslint" }),
      );
      // one layout for everyone (.prettierrc.json, 120 columns): `npm run format` writes it
      await stage("format (prettier --check)", () =>
        runAsync(process.execPath, ["node_modules/prettier/bin/prettier.cjs", "--check", "--log-level=warn", "."], {
          what: "prettier",
        }),
      );
    }
    if (!only || only === "unit" || only === "fast") await vitest("unit", {});

    if (!only || only !== "unit") {
      // A throwaway database and mail catcher: own folder and ports, removed before and after the run.
      const dir = path.join(root, ".data", "test");
      rmSync(dir, { recursive: true, force: true });
      mkdirSync(dir, { recursive: true });
      const database = await startMariadb({
        dir,
        port: await freePort(Number(process.env.TEST_DB_PORT ?? 3317)),
        database: "lashwright_test",
      });
      cleanup.add(async () => {
        await database.stop();
        rmSync(dir, { recursive: true, force: true });
      });
      if (only === "fast") {
        await runTs("db/migrate.ts", { DATABASE_URL: database.url });
        await vitest("integration", { DATABASE_URL: database.url, LASHWRIGHT_TEST_DB_URL: database.url }, [
          "tests/integration/db",
        ]);
      } else {
        const mail = await startMailCatcher({
          smtpPort: await freePort(),
          webPort: await freePort(),
          dir: path.join(dir, "mail"),
        });
        cleanup.add(mail.stop);
        const store = await startObjectStore({ port: await freePort(), dir: path.join(dir, "photos") });
        cleanup.add(store.stop);
        const env = {
          ...store.env,
          DATABASE_URL: database.url,
          LASHWRIGHT_TEST_DB_URL: database.url,
          SMTP_URL: mail.smtpUrl,
          LASHWRIGHT_MAIL_API: mail.apiUrl,
          NEXTAUTH_SECRET: randomBytes(32).toString("base64url"),
          // notices gathered for 2 s instead of minutes, so a test waits seconds for its mail
          NOTICE_DIGEST_SECONDS: "2",
          // one JSON line per request would bury a failure's output; tests that read the log set their own
          LOG_LEVEL: process.env.LOG_LEVEL ?? "warn",
          // every answer checked against its route's contract (lib/api/contract.ts): a 500 when outside it
          LASHWRIGHT_CHECK_CONTRACT: "1",
        };
        await runTs("db/migrate.ts", env);
        // LASHWRIGHT_REUSE_BUILD=1 (for a developer iterating on tests) keeps the existing .next build
        const reuse = process.env.LASHWRIGHT_REUSE_BUILD === "1" && existsSync(path.join(root, ".next", "BUILD_ID"));
        const built =
          reuse ||
          (await stage("production build (next build)", () =>
            runAsync(process.execPath, ["node_modules/next/dist/bin/next", "build"], {
              env: { ...env, NEXT_TELEMETRY_DISABLED: "1" },
              what: "next build",
            }),
          ));
        if (!built) failures.push("integration and browser tests skipped: the build failed");
        // Integration tests talk HTTP to the production build; they start and restart it themselves.
        if (built && (!only || only === "integration")) await vitest("integration", env);
        if (built && (!only || only === "e2e")) {
          await runTs("db/seed.ts", env);
          const port = await freePort();
          // no load balancer in front: nothing to tell before closing (server/drain.ts); every record
          // change checked to run on the one write path (db/write-path.ts), as in tests/support/server.ts
          // (not in `env`: the seed above and the test processes write their fixtures directly)
          const server = startNext(port, {
            ...env,
            NEXTAUTH_URL: `http://127.0.0.1:${port}`,
            SHUTDOWN_NOTICE_MS: "0",
            LASHWRIGHT_CHECK_WRITES: "1",
          });
          cleanup.add(server.stop);
          await server.ready;
          await vitest("e2e", { ...env, LASHWRIGHT_BASE_URL: `http://127.0.0.1:${port}` });
          await server.stop();
        }
        // The cluster level: three Galera nodes of its own, two app instances started by the tests.
        if (built && (!only || only === "cluster")) {
          const cluster = await startTestCluster({ dir: path.join(root, ".data", "test-cluster"), runTs });
          cleanup.add(cluster.stop);
          await vitest("cluster", { ...env, ...cluster.env });
          await cluster.stop();
        }
      }
    }
  } catch (e) {
    failures.push(e instanceof SetupError ? e.message : String(e?.stack ?? e));
    console.error(`[lashwright] test set-up failed: ${e instanceof SetupError ? e.message : (e?.stack ?? e)}`);
  } finally {
    await cleanup.runAll();
  }
  if (failures.length) log(`failed steps: ${failures.join("; ")}`);
  log(`finished in ${Math.round((Date.now() - t0) / 1000)} s`);
  console.log(
    `${results.passed} passed, ${results.failed} failed${results.skipped ? `, ${results.skipped} skipped` : ""}`,
  );
  process.exit(failures.length || results.failed ? 1 : 0);
}

main();
