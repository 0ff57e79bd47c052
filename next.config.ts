import type { NextConfig } from "next";
import { withSerwist } from "@serwist/turbopack";

const nextConfig: NextConfig = {
  reactStrictMode: true,
  poweredByHeader: false,
  // The app runs from its own folder; keep Turbopack from guessing a workspace root above it.
  turbopack: { root: __dirname },
};

export default withSerwist(nextConfig);
