"use client";

import "./globals.css";
import { LoadFailed } from "@/components/sync/load-failed";

/** The layout itself failed: the same notice, with its own document. */
export default function GlobalError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <html lang="en">
      <body className="min-h-dvh bg-bg font-sans text-ink antialiased">
        <main className="mx-auto flex max-w-xl flex-col gap-4 px-4 pt-6">
          <LoadFailed error={error} retry={reset} />
        </main>
      </body>
    </html>
  );
}
