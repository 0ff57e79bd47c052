"use client";

import { PersistQueries } from "./persist-queries";
import Dexie from "dexie";
import { useLiveQuery } from "dexie-react-hooks";
import { del } from "idb-keyval";
import { usePathname } from "next/navigation";
import { createContext, useCallback, useContext, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { openLocalDb, getMeta, type LocalDb, type OutboxEntry } from "@/lib/sync/local-db";
import { discardHeld, heldEntries, Offline, retryHeld, ServerBusy, SessionRevoked, SignedOut, syncOnce, wipeRevoked, type SyncState } from "@/lib/sync/client";
import { waitingCount } from "@/lib/sync/outbox";
import { retryDelay } from "@/lib/sync/transport";
import { useIsClient, useStored } from "@/components/ui/use-stored";

/**
 * The phone's side of the app: who is signed in (kept locally so the garage screens open with no
 * signal), their local database, and the sync loop: at start, on reconnect, on focus, every 30 s
 * while online, and when the service worker's Background Sync fires.
 */
export interface LocalUser {
  id: string;
  name: string;
  email: string;
  displayUnit: "mm" | "in";
}

interface LocalContext {
  user: LocalUser | null;
  /** false until the stored identity has been read */
  ready: boolean;
  db: LocalDb | null;
  state: SyncState;
  /** when the server was busy: the time of the next try */
  retryAt: number | null;
  /** the wait is this account's write budget (429), not a saturated server */
  limited: boolean;
  waiting: number;
  lastSyncAt: number | null;
  /** changes the server did not apply: kept, with the reason, until sent or discarded */
  held: OutboxEntry[];
  persisted: boolean | null;
  /**
   * "closed": a newer build's window upgraded the phone's database and this window had to let go
   * of it (it can no longer save until reloaded); "blocked": this window waits for an older one.
   */
  dbNotice: "closed" | "blocked" | null;
  syncNow: () => Promise<void>;
  /** send a refused change again (the mechanic may have fixed what it depends on) */
  retry: (seq: number) => Promise<void>;
  /** drop a refused change by the mechanic's choice; the server's copy comes back at the next sync */
  discard: (seq: number) => Promise<void>;
  /** delete this user's local data and identity from the phone (before signing out) */
  forget: () => Promise<void>;
  /** the last session here was ended elsewhere: whose it was and how much unsent work it left */
  revoked: Revoked | null;
}

/** What the phone says after a session ended elsewhere wiped its copy (no records, only counts). */
export interface Revoked {
  email: string;
  changes: number;
  photos: number;
}

const Ctx = createContext<LocalContext | null>(null);
const USER_KEY = "lashwright.user";
const REVOKED_KEY = "lashwright.revoked";
const SYNC_EVERY_MS = 30_000;

function storedUser(): LocalUser | null {
  try {
    return JSON.parse(localStorage.getItem(USER_KEY) ?? "null") as LocalUser | null;
  } catch {
    return null;
  }
}

export function LocalProvider({ children }: { children: ReactNode }) {
  const [user, storeUser] = useStored<LocalUser | null>(USER_KEY, null);
  const [revoked, storeRevoked] = useStored<Revoked | null>(REVOKED_KEY, null);
  const ready = useIsClient();
  const [state, setState] = useState<SyncState>("idle");
  const [persisted, setPersisted] = useState<boolean | null>(null);
  const userId = user?.id;
  const db = useMemo(() => (userId ? openLocalDb(userId) : null), [userId]);
  const [dbNotice, setDbNotice] = useState<"closed" | "blocked" | null>(null);
  useEffect(() => {
    if (!db) return;
    // a deletion (signing out in another window) has newVersion null: nothing to say then
    const onChange = (ev: IDBVersionChangeEvent) => void (ev.newVersion && setDbNotice("closed"));
    const onBlocked = (ev: IDBVersionChangeEvent) => void (ev.newVersion && ev.newVersion > ev.oldVersion && setDbNotice("blocked"));
    db.on("versionchange", onChange);
    db.on("blocked", onBlocked);
    return () => {
      db.on("versionchange").unsubscribe(onChange);
      db.on("blocked").unsubscribe(onBlocked);
    };
  }, [db]);
  const running = useRef<Promise<void> | null>(null);
  const [retryAt, setRetryAt] = useState<number | null>(null);
  const [limited, setLimited] = useState(false);
  // a busy server: tries so far, and no regular sync before the time it was asked to wait
  const busyTries = useRef(0);
  const busyUntil = useRef(0);

  // The session was ended elsewhere: wipe this user's copy, keep the unsent work for their next
  // sign-in here (lib/sync/client.ts wipeRevoked), drop the kept copies of shared checks and clubs
  // and the identity, and say what happened. The kept queries' writer is throttled (1 s): a write
  // already scheduled may land after the first delete, hence the second.
  const revoke = useCallback(async () => {
    setState("signed-out");
    if (!userId) return;
    const kept = db ? await wipeRevoked(db).catch(() => ({ changes: 0, photos: 0 })) : { changes: 0, photos: 0 };
    storeRevoked({ email: user?.email ?? "", ...kept });
    storeUser(null);
    const cache = `lashwright-cache-${userId}`;
    await del(cache).catch(() => undefined);
    setTimeout(() => void del(cache).catch(() => undefined), 2_000);
  }, [db, storeRevoked, storeUser, user?.email, userId]);
  const revokeNow = useRef(revoke);
  useEffect(() => {
    revokeNow.current = revoke;
  }, [revoke]);

  // The identity: the stored one at once, then the server's word when it can be reached, asked
  // again on each new page: if the session now belongs to someone else (a sign-in link opened, a
  // sign-in in another tab), the header, the local database and the sync follow it at once.
  const path = usePathname();
  const askAgain = path;
  useEffect(() => {
    // next-auth's session answer first: it is 200 with no user when nobody is signed in, so a
    // visitor's page logs no failed request; only a signed-in phone asks the account route. A cookie
    // minted before a sign-out everywhere or a new password answers { revoked: true }.
    fetch("/api/auth/session", { credentials: "same-origin" })
      .then(async (res) => (await res.json().catch(() => ({}))) as { user?: unknown; revoked?: boolean })
      .then((s) => (s.revoked ? "revoked" : s.user ? fetch("/api/account", { credentials: "same-origin" }) : new Response(null, { status: 401 })))
      .then(async (res) => {
        if (res === "revoked") return void revokeNow.current();
        if (res.status === 401) {
          setState("signed-out");
          return;
        }
        if (!res.ok) return;
        const { user: u } = (await res.json()) as { user: LocalUser };
        const prev = storedUser();
        const keep: LocalUser = { id: u.id, name: u.name, email: u.email, displayUnit: u.displayUnit };
        if (!prev || prev.id !== keep.id || prev.name !== keep.name || prev.displayUnit !== keep.displayUnit) storeUser(keep);
        storeRevoked(null);
      })
      .catch(() => setState("offline"));
  }, [storeUser, storeRevoked, askAgain]);

  // Ask the browser to keep our data; the answer is shown in the status line.
  useEffect(() => {
    if (!navigator.storage?.persist) return;
    navigator.storage.persisted().then((already) => (already ? setPersisted(true) : navigator.storage.persist().then(setPersisted)));
  }, []);

  // a request made while a sync runs (a change written meanwhile) gets one more run after it
  const again = useRef(false);
  const syncNow = useCallback(async () => {
    if (!db) return;
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
          if (!(e instanceof Offline || e instanceof SignedOut || e instanceof ServerBusy)) console.error("[sync] failed:", e);
          break;
        }
      } while (again.current);
    })().finally(() => {
      running.current = null;
    });
    return running.current;
  }, [db]);
  // the next try after a busy answer
  useEffect(() => {
    if (retryAt === null) return;
    const t = setTimeout(() => void syncNow(), Math.max(0, retryAt - Date.now()));
    return () => clearTimeout(t);
  }, [retryAt, syncNow]);

  useEffect(() => {
    if (!db) return;
    void syncNow();
    const onOnline = () => void syncNow();
    const onFocus = () => document.visibilityState === "visible" && void syncNow();
    const onMessage = (e: MessageEvent) => (e.data as { type?: string })?.type === "lashwright-sync" && void syncNow();
    window.addEventListener("online", onOnline);
    document.addEventListener("visibilitychange", onFocus);
    navigator.serviceWorker?.addEventListener("message", onMessage);
    // the regular sync waits while a busy server's retry is pending
    const timer = setInterval(() => navigator.onLine && Date.now() >= busyUntil.current && void syncNow(), SYNC_EVERY_MS);
    return () => {
      window.removeEventListener("online", onOnline);
      document.removeEventListener("visibilitychange", onFocus);
      navigator.serviceWorker?.removeEventListener("message", onMessage);
      clearInterval(timer);
    };
  }, [db, syncNow]);

  // changes and photos not yet on the server
  const waiting = useLiveQuery(async () => (db ? (await waitingCount(db)) + (await db.photos.where("state").equals("waiting").count()) : 0), [db], 0);
  const lastSyncAt = useLiveQuery(async () => (db ? ((await getMeta<number>(db, "lastSyncAt")) ?? null) : null), [db, state], null);
  const held = useLiveQuery(async () => (db ? await heldEntries(db) : []), [db], []);
  const retry = useCallback(
    async (seq: number) => {
      if (!db) return;
      await retryHeld(db, seq);
      await syncNow();
    },
    [db, syncNow],
  );
  const discard = useCallback(async (seq: number) => void (db && (await discardHeld(db, seq))), [db]);

  // When changes wait and a signal may be back, ask for Background Sync where the browser has it.
  useEffect(() => {
    if (waiting === 0 || !("serviceWorker" in navigator)) return;
    navigator.serviceWorker.ready
      .then((reg) => (reg as ServiceWorkerRegistration & { sync?: { register(tag: string): Promise<void> } }).sync?.register("lashwright-sync"))
      .catch(() => undefined);
  }, [waiting]);

  // Signing out leaves nothing of this user on the phone: their local database (records and
  // outbox), the kept copies of other members' shared checks, and the stored identity (OWASP ASVS
  // 5.0 V14 Data Protection, V7 Session Management: sign-out ends what the session could read).
  const forget = useCallback(async () => {
    if (userId) {
      db?.close();
      await Promise.all([Dexie.delete(`lashwright-${userId}`), del(`lashwright-cache-${userId}`)]).catch(() => undefined);
    }
    storeUser(null);
  }, [db, storeUser, userId]);

  const value: LocalContext = { user, ready, db, state, retryAt, limited, waiting, lastSyncAt, held, persisted, dbNotice, syncNow, retry, discard, forget, revoked };
  return (
    <Ctx.Provider value={value}>
      <PersistQueries userId={userId ?? null} />
      {children}
    </Ctx.Provider>
  );
}

export function useLocal(): LocalContext {
  const v = useContext(Ctx);
  if (!v) throw new Error("useLocal outside LocalProvider");
  return v;
}
