import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

// Four projects: unit (pure, fast), integration (real MariaDB started by scripts/test.mjs), e2e (real
// Chromium against a production build) and cluster (Galera). scripts/test.mjs runs them in that order.
const root = fileURLToPath(new URL(".", import.meta.url));
export default defineConfig({
  // server-only throws outside a React server build; under test it is the empty module it is there.
  resolve: { alias: { "@": root, "server-only": `${root}node_modules/server-only/empty.js` } },
  test: {
    setupFiles: ["tests/support/fast-check-seed.ts"],
    projects: [
      { extends: true, test: { name: "unit", include: ["tests/unit/**/*.test.ts"], environment: "node" } },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          fileParallelism: false,
          testTimeout: 30_000,
          hookTimeout: 60_000,
        },
      },
      {
        extends: true,
        // two app instances on a three-node Galera cluster started by scripts/test.mjs
        test: {
          name: "cluster",
          include: ["tests/cluster/**/*.test.ts"],
          environment: "node",
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 120_000,
        },
      },
      {
        extends: true,
        test: {
          name: "e2e",
          include: ["tests/e2e/**/*.test.ts"],
          environment: "node",
          fileParallelism: false,
          testTimeout: 90_000,
          hookTimeout: 120_000,
        },
      },
    ],
  },
});
