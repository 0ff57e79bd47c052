"use client";

import { useQueryClient } from "@tanstack/react-query";
import { useEffect, useState } from "react";
import { apiFetch, ApiFailure } from "@/lib/api/client";
import type { answers, Answer } from "@/lib/api/contract";
import type { ApiPhoto } from "@/lib/photos/rules";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";

type Said = { tone: "ok" | "error" | "info"; text: string } | null;

/** Hand a file to the browser to save; the address is freed once the click is handled. */
function save(href: string, fileName: string, revoke: boolean) {
  const a = document.createElement("a");
  a.href = href;
  a.download = fileName;
  document.body.append(a);
  a.click();
  a.remove();
  if (revoke) setTimeout(() => URL.revokeObjectURL(href), 30_000);
}

interface Imported {
  engines: number;
  checks: number;
  readings: number;
  photos: number;
  tray: number;
  photosNotIncluded: number;
  commentsNotRestored: number;
}

/**
 * The account's data as one file, and the way back: the server's export (streamed to disk as it is
 * written), the same file made from this phone's own copy with no signal, and an import into an
 * account that holds nothing yet.
 */
export function DataExport() {
  const { user, syncNow, needDb } = useLocalCore();
  const queryClient = useQueryClient();
  const [busy, setBusy] = useState<"server" | "phone" | "import" | null>(null);
  const [said, setSaid] = useState<Said>(null);
  // the phone's zip writer is fetched while there is a signal, so the tap works without one
  useEffect(() => {
    void import("@/lib/export/offline").catch(() => undefined);
  }, []);

  const fromServer = async () => {
    setBusy("server");
    setSaid(null);
    try {
      const { href, fileName } = await apiFetch<Answer<typeof answers.exportTicket>>("/api/account/export", {
        method: "POST",
        body: {},
      });
      save(href, fileName, false);
      setSaid({ tone: "ok", text: `Your export is downloading as ${fileName}.` });
    } catch (e) {
      setSaid({
        tone: "error",
        text:
          e instanceof ApiFailure && e.status === 0
            ? "No connection to the server: make the file from this phone instead."
            : e instanceof Error
              ? e.message
              : "The export could not be started.",
      });
    } finally {
      setBusy(null);
    }
  };

  const fromPhone = async () => {
    if (!user) return;
    setBusy("phone");
    setSaid(null);
    try {
      // the account page draws without the phone's database (components/ui/screens.tsx): load it now
      const db = await needDb();
      const { phoneExport } = await import("@/lib/export/offline");
      // the photos the phone has heard of from the server (its kept answers), to list those it does not hold
      const knownPhotos = queryClient
        .getQueriesData<ApiPhoto[]>({ queryKey: ["checks"] })
        .filter(([key]) => key[2] === "photos")
        .flatMap(([, items]) => items ?? []);
      const { blob, fileName, photosNotIncluded } = await phoneExport({ db, user, knownPhotos });
      save(URL.createObjectURL(blob), fileName, true);
      setSaid({
        tone: "ok",
        text: `Saved ${fileName} from this phone.${photosNotIncluded ? ` ${photosNotIncluded} photo${photosNotIncluded === 1 ? " is" : "s are"} on the server only and listed as not included.` : ""}`,
      });
    } catch {
      setSaid({ tone: "error", text: "The file could not be made on this phone." });
    } finally {
      setBusy(null);
    }
  };

  const bringBack = async (file: File) => {
    setBusy("import");
    setSaid(null);
    try {
      const res = await fetch("/api/account/import", {
        method: "POST",
        headers: { "content-type": "application/zip" },
        body: file,
        credentials: "same-origin",
      });
      const json = (await res.json().catch(() => null)) as { imported?: Imported; error?: { message: string } } | null;
      if (!res.ok || !json?.imported) throw new Error(json?.error?.message ?? `The server answered ${res.status}`);
      const n = json.imported;
      setSaid({
        tone: "ok",
        text: `Brought back ${n.engines} engine${n.engines === 1 ? "" : "s"}, ${n.checks} check${n.checks === 1 ? "" : "s"}, ${n.readings} readings, ${n.photos} photo${n.photos === 1 ? "" : "s"} and ${n.tray} tray size${n.tray === 1 ? "" : "s"}.${n.photosNotIncluded ? ` ${n.photosNotIncluded} photo${n.photosNotIncluded === 1 ? " was" : "s were"} not in the file.` : ""}${n.commentsNotRestored ? ` ${n.commentsNotRestored} comment${n.commentsNotRestored === 1 ? "" : "s"} by other members stay in the file only.` : ""}`,
      });
      void syncNow();
    } catch (e) {
      setSaid({
        tone: "error",
        text:
          e instanceof TypeError
            ? "No connection to the server: an import needs one."
            : e instanceof Error
              ? e.message
              : "The file could not be imported.",
      });
    } finally {
      setBusy(null);
    }
  };

  return (
    <section className="flex flex-col gap-3" aria-labelledby="data-heading">
      <h2 id="data-heading" className="text-xl font-bold">
        Your data
      </h2>
      <p>
        One zip file with every engine, check and reading (and how each was found), the shim plans, comments, tray,
        loans and photos, plus a CSV of each check. A few exports an hour.
      </p>
      <div className="flex flex-wrap gap-3">
        <Button type="button" disabled={busy !== null} onClick={() => void fromServer()}>
          {busy === "server" ? "Starting…" : "Export everything"}
        </Button>
        <Button type="button" look="plain" disabled={busy !== null || !user} onClick={() => void fromPhone()}>
          {busy === "phone" ? "Making the file…" : "Export from this phone"}
        </Button>
      </div>
      <p className="text-sm text-ink-soft">
        From this phone works without a signal: it writes what the phone holds, and lists photos it does not hold as not
        included.
      </p>
      <h3 className="text-lg font-bold">Bring an export back</h3>
      <p className="text-sm text-ink-soft">
        Only into an account with no engines and an empty tray. A damaged file, or one from a newer version, is refused
        and nothing changes.
      </p>
      <label className="flex min-h-12 flex-col gap-1 text-lg">
        Export file (.zip)
        <input
          type="file"
          accept=".zip,application/zip"
          disabled={busy !== null}
          className="min-h-12 text-base"
          onChange={(e) => {
            const f = e.target.files?.[0];
            e.target.value = "";
            if (f) void bringBack(f);
          }}
        />
      </label>
      {busy === "import" && <p className="text-ink-soft">Reading the file…</p>}
      <div aria-live="polite">{said && <Notice tone={said.tone}>{said.text}</Notice>}</div>
    </section>
  );
}
