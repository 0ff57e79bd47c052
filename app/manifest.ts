import type { MetadataRoute } from "next";

export default function manifest(): MetadataRoute.Manifest {
  return {
    name: "Lashwright: valve clearance workbook",
    short_name: "Lashwright",
    description: "Measure valve clearances, plan shims, fit and re-check, offline in the garage.",
    start_url: "/engines",
    scope: "/",
    display: "standalone",
    orientation: "portrait",
    background_color: "#121417",
    theme_color: "#121417",
    icons: [
      { src: "/icons/icon-192.png", sizes: "192x192", type: "image/png", purpose: "any" },
      { src: "/icons/icon-512.png", sizes: "512x512", type: "image/png", purpose: "any" },
      { src: "/icons/icon-512.png", sizes: "512x512", type: "image/png", purpose: "maskable" },
    ],
  };
}
