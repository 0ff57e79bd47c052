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
  {
    // One decimal parser (lib/parse-decimal.ts): a decimal comma turned into a point anywhere else is a
    // second rule for what a typed number means.
    files: ["**/*.{ts,tsx,mjs,js}"],
    ignores: ["lib/parse-decimal.ts"],
    rules: {
      "no-restricted-syntax": [
        "error",
        {
          // s.replace(",", "."), s.replaceAll(",", "."), s.replace(/,/g, ".")
          selector:
            "CallExpression[callee.property.name=/^replace(All)?$/]:matches([arguments.0.value=','], [arguments.0.regex.pattern=',']):matches([arguments.1.value='.'])",
          message: "Read typed decimals with parseDecimal from lib/parse-decimal.ts.",
        },
      ],
    },
  },
  {
    // db/queries holds SQL only: the rules (access, refusals) and their domain errors are server/'s
    // (DEVELOPERS.md "One write path"); a query answers what it found and the caller decides.
    files: ["db/queries/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            {
              group: ["@/lib/errors", "**/lib/errors"],
              message: "db/queries holds SQL only: return what was found and let server/ throw the domain error.",
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
