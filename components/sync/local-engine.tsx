"use client";

import { liveQuery } from "dexie";
import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { openLocalDb, getMeta, type LocalDb, type OutboxEntry } from "@/lib/sync/local-db";
import {
  discardHeld,
  heldEntries,
  Offline,
  retryHeld,
  ServerBusy,
  SessionRevoked,
  SignedOut,
  syncOnce,
  type SyncState,
} from "@/lib/sync/phone-sync";
import { waitingCount } from "@/lib/sync/outbox";
import { retryDelay } from "@/lib/sync/transport";
import { preloadWrites } from "@/lib/sync/later";
import { useLiveQuery } from "./use-live-query";

/**
 * The phone's local database and its sync loop, loaded behind the first paint (components/sync/
 * local-provider imports this module only once a signed-in page needs its records): Dexie, the
 * outbox and the validation it runs are not in any page's first JavaScript. The sync runs at start,
 * on reconnect, on focus, every 30 s while online, and when the service worker's Background Sync
 * fires.
 */
export interface EngineState {
  db: LocalDb;
  live: typeof liveQuery;
  retryAt: number | null;
  limited: boolean;
  waiting: number;
  lastSyncAt: number | null;
  held: OutboxEntry[];
  dbNotice: "closed" | "blocked" | null;
  syncNow: () => Promise<void>;
  retry: (seq: number) => Promise<void>;
  discard: (seq: number) => Promise<void>;
}

const SYNC_EVERY_MS = 30_000;

export default function LocalEngine({
  userId,
  state,
  setState,
  onChange,
  onRevoked,
}: {
  userId: string;
  state: SyncState;
  setState: (s: SyncState) => void;
  onChange: (e: EngineState | null) => void;
  onRevoked: () => Promise<void>;
}) {
  const db = useMemo(() => openLocalDb(userId), [userId]);
  // the screens' writes come in now, so the first tap does not wait for them
  useEffect(() => preloadWrites(), []);
  const [dbNotice, setDbNotice] = useState<"closed" | "blocked" | null>(null);
  useEffect(() => {
    // a deletion (signing out in another window) has newVersion null: nothing to say then
    const onVersion = (ev: IDBVersionChangeEvent) => void (ev.newVersion && setDbNotice("closed"));
    const onBlocked = (ev: IDBVersionChangeEvent) =>
      void (ev.newVersion && ev.newVersion > ev.oldVersion && setDbNotice("blocked"));
    db.on("versionchange", onVersion);
    db.on("blocked", onBlocked);
    return () => {
      db.on("versionchange").unsubscribe(onVersion);
      db.on("blocked").unsubscribe(onBlocked);
    };
  }, [db]);
  const running = useRef<Promise<void> | null>(null);
  const [retryAt, setRetryAt] = useState<number | null>(null);
  const [limited, setLimited] = useState(false);
  // a busy server: tries so far, and no regular sync before the time it was asked to wait
  const busyTries = useRef(0);
  const busyUntil = useRef(0);
  const revokeNow = useRef(onRevoked);
  useEffect(() => {
    revokeNow.current = onRevoked;
  }, [onRevoked]);

  // a request made while a sync runs (a change written meanwhile) gets one more run after it
  const again = useRef(false);
  const syncNow = useCallback(async () => {
    if (running.current) {
      again.current = true;
      return running.current;
    }
    setRetryAt(null);
    running.current = (async () => {
      do {
        again.current = false;
        setState("syncing");
        try {
          await syncOnce(db, (u, i) => fetch(u, i));
          busyTries.current = 0;
          setState("idle");
        } catch (e) {
          if (e instanceof ServerBusy) {
            // the outbox stays as it is; come back when asked, later with each busy answer, with jitter
            busyUntil.current = Date.now() + retryDelay(busyTries.current++, e.retryAfterMs);
            setRetryAt(busyUntil.current);
            setLimited(e.status === 429);
            setState("busy");
          } else if (e instanceof SessionRevoked) await revokeNow.current();
          else setState(e instanceof SignedOut ? "signed-out" : e instanceof Offline ? "offline" : "error");
          if (!(e instanceof Offline || e instanceof SignedOut || e instanceof ServerBusy))
            console.error("[sync] failed:", e);
          break;
        }
      } while (again.current);
    })().finally(() => {
      running.current = null;
    });
    return running.current;
  }, [db, setState]);
  // the next try after a busy answer
  useEffect(() => {
    if (retryAt === null) return;
    const t = setTimeout(() => void syncNow(), Math.max(0, retryAt - Date.now()));
    return () => clearTimeout(t);
  }, [retryAt, syncNow]);

  useEffect(() => {
    void syncNow();
    const onOnline = () => void syncNow();
    const onFocus = () => document.visibilityState === "visible" && void syncNow();
    const onMessage = (e: MessageEvent) => (e.data as { type?: string })?.type === "lashwright-sync" && void syncNow();
    window.addEventListener("online", onOnline);
    document.addEventListener("visibilitychange", onFocus);
    navigator.serviceWorker?.addEventListener("message", onMessage);
    // the regular sync waits while a busy server's retry is pending
    const timer = setInterval(
      () => navigator.onLine && Date.now() >= busyUntil.current && void syncNow(),
      SYNC_EVERY_MS,
    );
    return () => {
      window.removeEventListener("online", onOnline);
      document.removeEventListener("visibilitychange", onFocus);
      navigator.serviceWorker?.removeEventListener("message", onMessage);
      clearInterval(timer);
    };
  }, [syncNow]);

  // changes and photos not yet on the server (read straight through liveQuery: the context's
  // copy of it is what this module hands up)
  const waiting = useLiveQuery(
    async () => (await waitingCount(db)) + (await db.photos.where("state").equals("waiting").count()),
    [db],
    0,
    liveQuery,
  );
  const lastSyncAt = useLiveQuery(
    async () => (await getMeta<number>(db, "lastSyncAt")) ?? null,
    [db, state],
    null,
    liveQuery,
  );
  const held = useLiveQuery(() => heldEntries(db), [db], [] as OutboxEntry[], liveQuery);
  const retry = useCallback(
    async (seq: number) => {
      await retryHeld(db, seq);
      await syncNow();
    },
    [db, syncNow],
  );
  const discard = useCallback((seq: number) => discardHeld(db, seq), [db]);

  // When changes wait and a signal may be back, ask for Background Sync where the browser has it.
  useEffect(() => {
    if (waiting === 0 || !("serviceWorker" in navigator)) return;
    navigator.serviceWorker.ready
      .then((reg) =>
        (reg as ServiceWorkerRegistration & { sync?: { register(tag: string): Promise<void> } }).sync?.register(
          "lashwright-sync",
        ),
      )
      .catch(() => undefined);
  }, [waiting]);

  useEffect(() => {
    onChange({ db, live: liveQuery, retryAt, limited, waiting, lastSyncAt, held, dbNotice, syncNow, retry, discard });
  }, [onChange, db, retryAt, limited, waiting, lastSyncAt, held, dbNotice, syncNow, retry, discard]);
  useEffect(() => () => onChange(null), [onChange]);
  return null;
}
