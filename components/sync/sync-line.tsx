"use client";

import Link from "next/link";
import { useEffect, useState } from "react";
import { useLocal } from "./local-provider";

function ago(ms: number): string {
  const s = Math.round((Date.now() - ms) / 1000);
  if (s < 60) return "just now";
  const m = Math.round(s / 60);
  if (m < 60) return `${m} min ago`;
  const h = Math.round(m / 60);
  return h < 48 ? `${h} h ago` : `${Math.round(h / 24)} days ago`;
}

/** One small line that always says where the work is: on this phone, waiting, or synced. */
export function SyncLine() {
  const { waiting, lastSyncAt, state, retryAt, limited, rejected, syncNow } = useLocal();
  const [, tick] = useState(0);
  useEffect(() => {
    const t = setInterval(() => tick((n) => n + 1), 30_000);
    return () => clearInterval(t);
  }, []);
  const changes = `${waiting} change${waiting === 1 ? "" : "s"} waiting`;
  let text: string;
  if (state === "signed-out") text = `Saved on this phone · ${changes} · sign in to sync`;
  else if (state === "syncing") text = `Syncing ${changes}…`;
  else if (state === "busy") text = `Saved on this phone · ${changes} · waiting for the server (${limited ? "many changes at once, sent in parts" : "busy"})${retryAt ? `, next try at ${new Date(retryAt).toLocaleTimeString([], { hour: "2-digit", minute: "2-digit", second: "2-digit" })}` : ""}`;
  else if (waiting > 0) text = `Saved on this phone · ${changes}`;
  else if (lastSyncAt) text = `All synced · ${ago(lastSyncAt)}`;
  else text = "Saved on this phone";
  return (
    <div className="flex flex-col gap-1 text-sm" data-testid="sync-line">
      <div className="flex items-center gap-2">
        <span aria-hidden>{waiting > 0 || state === "signed-out" ? "◔" : "●"}</span>
        <span role="status" aria-live="polite">
          {text}
        </span>
        {state === "signed-out" ? (
          <Link href="/sign-in?next=/engines" className="ml-auto inline-flex min-h-12 items-center px-2 font-bold underline">
            Sign in
          </Link>
        ) : (
          waiting > 0 && (
            <button type="button" onClick={() => void syncNow()} className="ml-auto min-h-12 px-2 font-bold underline">
              Sync now
            </button>
          )
        )}
      </div>
      {rejected.length > 0 && (
        <details className="text-tight">
          <summary className="min-h-12 cursor-pointer py-3 font-bold">✕ {rejected.length} change{rejected.length === 1 ? " was" : "s were"} refused by the server</summary>
          <ul className="list-disc pl-5">
            {rejected.slice(-5).map((r) => (
              <li key={r.id}>{r.reason}</li>
            ))}
          </ul>
        </details>
      )}
    </div>
  );
}
