"use client";

import { LoadFailed } from "@/components/sync/load-failed";

/** A screen that failed (often its code could not load after an update): the work is safe, reload. */
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <main className="mx-auto flex min-h-dvh max-w-xl flex-col gap-4 px-4 pt-6">
      <LoadFailed error={error} retry={reset} />
    </main>
  );
}
