import { createSerwistRoute } from "@serwist/turbopack";
import { SHELL_PATHS } from "@/lib/offline/shells";

// One revision per build: the shells change with every deploy. The worker also takes it as the
// build's name (its page-data cache and the previous build's kept files are named by it).
const revision = crypto.randomUUID();
const distDir = process.env.LASHWRIGHT_DIST_DIR || ".next";

export const { dynamic, dynamicParams, revalidate, generateStaticParams, GET } = createSerwistRoute({
  swSrc: "worker/sw.ts",
  useNativeEsbuild: true,
  additionalPrecacheEntries: SHELL_PATHS.map((url) => ({ url, revision })),
  nextConfig: { distDir },
  globPatterns: [`${distDir}/static/**/*.{js,css,woff2,png,svg,ico,json}`, "public/**/*.{png,svg,ico,webmanifest}"],
});
