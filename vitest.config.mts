import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

// Three projects: unit (pure, fast), integration (real MariaDB started by scripts/test.mjs) and e2e
// (real Chromium against a production build). scripts/test.mjs runs them in that order.
const root = fileURLToPath(new URL(".", import.meta.url));
export default defineConfig({
  // server-only throws outside a React server build; under test it is the empty module it is there.
  resolve: { alias: { "@": root, "server-only": `${root}node_modules/server-only/empty.js` } },
  test: {
    projects: [
      { extends: true, test: { name: "unit", include: ["tests/unit/**/*.test.ts"], environment: "node" } },
      {
        extends: true,
        test: { name: "integration", include: ["tests/integration/**/*.test.ts"], environment: "node", fileParallelism: false, testTimeout: 30_000, hookTimeout: 60_000 },
      },
      {
        extends: true,
        test: { name: "e2e", include: ["tests/e2e/**/*.test.ts"], environment: "node", fileParallelism: false, testTimeout: 90_000, hookTimeout: 120_000 },
      },
    ],
  },
});
