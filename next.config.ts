import type { NextConfig } from "next";
import { withSerwist } from "@serwist/turbopack";

/**
 * Security headers on every page and route. Scripts: the garage pages are static shells, prebuilt
 * and kept by the service worker for offline use, so they cannot carry a per-request nonce, and
 * Next inlines its page data as small scripts; 'unsafe-inline' for scripts stays until the
 * framework can hash those. Everything else is held to this origin, and no one may frame the app.
 */
const PAGE_CSP = [
  "default-src 'self'",
  "script-src 'self' 'unsafe-inline'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' blob: data:",
  "font-src 'self'",
  "connect-src 'self'",
  "worker-src 'self'",
  "manifest-src 'self'",
  "object-src 'none'",
  "base-uri 'self'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join("; ");
// the API answers data and images only: nothing in it may run or be framed
const API_CSP = "default-src 'none'; img-src 'self'; frame-ancestors 'none'; sandbox";

const COMMON = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
  // the camera for shim photos; nothing else, and never the location
  { key: "Permissions-Policy", value: "camera=(self), microphone=(), geolocation=(), payment=(), usb=()" },
];

const nextConfig: NextConfig = {
  // A second build beside the first (tests/e2e/update.test.ts deploys one over the other); the
  // service worker's precache list reads the same folder (app/serwist/[path]/route.ts).
  distDir: process.env.LASHWRIGHT_DIST_DIR || ".next",
  // source maps for a build being debugged on a phone; they also give every file a new name
  productionBrowserSourceMaps: process.env.LASHWRIGHT_SOURCE_MAPS === "1",
  reactStrictMode: true,
  poweredByHeader: false,
  // The app runs from its own folder; keep Turbopack from guessing a workspace root above it.
  turbopack: { root: __dirname },
  async headers() {
    return [
      { source: "/:path*", headers: [...COMMON, { key: "Content-Security-Policy", value: PAGE_CSP }] },
      { source: "/api/:path*", headers: [...COMMON, { key: "Content-Security-Policy", value: API_CSP }] },
    ];
  },
};

export default withSerwist(nextConfig);
