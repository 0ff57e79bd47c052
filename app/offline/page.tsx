import type { Metadata } from "next";
import Link from "next/link";

export const metadata: Metadata = { title: "Offline" };

/** Served by the service worker for any page that is not kept on the phone. */
export default function OfflinePage() {
  return (
    <main className="mx-auto flex min-h-dvh max-w-md flex-col gap-4 px-4 pt-8">
      <p className="text-2xl font-extrabold">
        Lash<span className="text-accent">wright</span>
      </p>
      <h1 className="text-3xl font-extrabold">No signal for this page</h1>
      <p className="text-ink-soft">
        This page needs the network. Your engines, checks and tray are kept on this phone and work without one.
      </p>
      <Link
        href="/engines"
        className="inline-flex min-h-14 items-center justify-center rounded-xl bg-accent px-6 text-lg font-extrabold text-accent-ink"
      >
        Go to my engines
      </Link>
    </main>
  );
}
