import type { Metadata, Viewport } from "next";
import localFont from "next/font/local";
import "./globals.css";
import { Providers } from "./providers";

// Both faces ship inside the app (OFL, from npm font packages): no request to any font host.
const body = localFont({
  src: "./fonts/atkinson-hyperlegible-next-latin-wght-normal.woff2",
  variable: "--font-body",
  weight: "200 800",
  display: "swap",
});
// the figures' face is not preloaded: the landing and account pages show no figures, and a preload
// would compete with the page's own first bytes on a slow line
const figures = localFont({
  src: "./fonts/atkinson-hyperlegible-mono-latin-wght-normal.woff2",
  variable: "--font-figures",
  weight: "200 800",
  display: "swap",
  preload: false,
});

export const metadata: Metadata = {
  title: { default: "Lashwright: valve clearance workbook", template: "%s · Lashwright" },
  description:
    "Measure valve clearances, plan shims with swaps and a buy list, fit and re-check, keep the history and get a mentor's review, all without a signal.",
  applicationName: "Lashwright",
  icons: { icon: "/icons/icon-192.png", apple: "/icons/apple-touch-icon.png" },
};

export const viewport: Viewport = {
  width: "device-width",
  initialScale: 1,
  themeColor: [
    { media: "(prefers-color-scheme: dark)", color: "#121417" },
    { media: "(prefers-color-scheme: light)", color: "#f5f2ea" },
  ],
};

export default function RootLayout({ children }: Readonly<{ children: React.ReactNode }>) {
  return (
    <html lang="en" className={`${body.variable} ${figures.variable}`}>
      <body className="min-h-dvh bg-bg font-sans text-ink antialiased">
        <Providers>{children}</Providers>
      </body>
    </html>
  );
}
