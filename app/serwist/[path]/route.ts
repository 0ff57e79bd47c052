import { createSerwistRoute } from "@serwist/turbopack";
import { SHELL_PATHS } from "@/lib/offline/shells";

// One revision per build: the shells change with every deploy.
const revision = crypto.randomUUID();

export const { dynamic, dynamicParams, revalidate, generateStaticParams, GET } = createSerwistRoute({
  swSrc: "worker/sw.ts",
  useNativeEsbuild: true,
  additionalPrecacheEntries: SHELL_PATHS.map((url) => ({ url, revision })),
  globPatterns: [".next/static/**/*.{js,css,woff2,png,svg,ico,json}", "public/**/*.{png,svg,ico,webmanifest}"],
});
