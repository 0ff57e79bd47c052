"use client";

import Link from "next/link";
import { useEffect, useState } from "react";
import type { OutboxEntry } from "@/lib/sync/local-db";
import { useLocal } from "./local-provider";

function ago(ms: number): string {
  const s = Math.round((Date.now() - ms) / 1000);
  if (s < 60) return "just now";
  const m = Math.round(s / 60);
  if (m < 60) return `${m} min ago`;
  const h = Math.round(m / 60);
  return h < 48 ? `${h} h ago` : `${Math.round(h / 24)} days ago`;
}

const KINDS: Record<string, string> = {
  engine: "an engine",
  check: "a check",
  reading: "a reading",
  tray: "a shim in the tray",
  comment: "a comment",
  verdict: "a review verdict",
  pool: "a club pool offer",
  borrow: "a shim loan",
};

/** A queued change in the mechanic's words: what it is about, and the valve for a reading. */
function whatChange(m: OutboxEntry): string {
  const [kind = "", verb = ""] = m.name.split("/")[0]!.split(".");
  const what = KINDS[kind] ?? "a change";
  const valve = (m.args as { reading?: { valve?: unknown } } | null)?.reading?.valve;
  const action = verb === "delete" || verb === "withdraw" ? "deleting " : "";
  return `${action}${what}${typeof valve === "string" ? ` (${valve})` : ""}`;
}

/** One small line that always says where the work is: on this phone, waiting, or synced. */
export function SyncLine() {
  const { waiting, lastSyncAt, state, retryAt, limited, held, syncNow, retry, discard } = useLocal();
  const refused = held.filter((m) => m.held?.kind === "refused");
  const later = held.find((m) => m.held?.kind === "later");
  const [, tick] = useState(0);
  useEffect(() => {
    const t = setInterval(() => tick((n) => n + 1), 30_000);
    return () => clearInterval(t);
  }, []);
  const changes = `${waiting} change${waiting === 1 ? "" : "s"} waiting`;
  let text: string;
  if (state === "signed-out") text = `Saved on this phone · ${changes} · sign in to sync`;
  else if (state === "syncing") text = `Syncing ${changes}…`;
  else if (state === "busy")
    text = `Saved on this phone · ${changes} · waiting for the server (${limited ? "many changes at once, sent in parts" : "busy"})${retryAt ? `, next try at ${new Date(retryAt).toLocaleTimeString([], { hour: "2-digit", minute: "2-digit", second: "2-digit" })}` : ""}`;
  // no answer at all: say so, rather than a reassuring "All synced" that is only about the past
  else if (state === "offline")
    text = `No signal · ${waiting > 0 ? `saved on this phone, ${changes}` : lastSyncAt ? `everything was synced ${ago(lastSyncAt)}` : "saved on this phone"}`;
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
          <Link
            href="/sign-in?next=/engines"
            className="ml-auto inline-flex min-h-12 items-center px-2 font-bold underline"
          >
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
      {later && (
        <div className="flex flex-wrap items-center gap-2 text-ink-soft" data-testid="sync-later">
          <span>
            The server could not take {whatChange(later)} yet ({later.held!.reason}); it stays on this phone, and it and
            the changes after it are sent again at the next sync.
          </span>
          <button
            type="button"
            onClick={() =>
              window.confirm(`Discard ${whatChange(later)}? The changes after it then go through.`) &&
              void discard(later.seq!)
            }
            className="min-h-12 rounded-xl border-2 border-line px-3 font-bold"
          >
            Discard it
          </button>
        </div>
      )}
      {refused.length > 0 && (
        <details className="text-tight" open data-testid="sync-refused">
          <summary className="min-h-12 cursor-pointer py-3 font-bold">
            ✕ The server refused {refused.length} change{refused.length === 1 ? "" : "s"}: kept on this phone until you
            decide
          </summary>
          <ul className="flex flex-col gap-2 text-ink">
            {refused.map((m) => (
              <li key={m.seq} className="flex flex-col gap-1 rounded-xl border-2 border-line p-2">
                <span>
                  {whatChange(m)}: <span className="font-bold">{m.held!.reason}</span>
                </span>
                <span className="flex flex-wrap gap-2">
                  {/* retry after fixing what it depends on (the engine, the check); discard takes the server's copy */}
                  <button
                    type="button"
                    onClick={() => void retry(m.seq!)}
                    className="min-h-12 rounded-xl border-2 border-line px-3 font-bold"
                  >
                    Send again
                  </button>
                  <button
                    type="button"
                    onClick={() =>
                      window.confirm(`Discard ${whatChange(m)}? What the server has stays as it is.`) &&
                      void discard(m.seq!)
                    }
                    className="min-h-12 rounded-xl border-2 border-line px-3 font-bold"
                  >
                    Discard
                  </button>
                </span>
              </li>
            ))}
          </ul>
        </details>
      )}
    </div>
  );
}
