import nextVitals from "eslint-config-next/core-web-vitals";
import nextTs from "eslint-config-next/typescript";
import { defineConfig, globalIgnores } from "eslint/config";

export default defineConfig([
  ...nextVitals,
  ...nextTs,
  {
    // lib/ is shared by the browser and the server: no React, no database, no Next.js.
    files: ["lib/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            {
              group: [
                "react",
                "react-dom",
                "next",
                "next/*",
                "@/db/*",
                "@/app/*",
                "@/components/*",
                "drizzle-orm*",
                "mysql2*",
              ],
              message: "lib/ stays free of React, Next.js and the database.",
            },
          ],
        },
      ],
    },
  },
  globalIgnores([
    ".next/**",
    ".next-*/**",
    "node_modules/**",
    ".data/**",
    "public/serwist/**",
    "next-env.d.ts",
    "test-results/**",
  ]),
]);
