"use client";

import { del } from "idb-keyval";
import { usePathname } from "next/navigation";
import {
  createContext,
  lazy,
  Suspense,
  useCallback,
  useContext,
  useEffect,
  useMemo,
  useRef,
  useState,
  type ReactNode,
} from "react";
import type { LocalDb, OutboxEntry } from "@/lib/sync/local-db";
import type { SyncState } from "@/lib/sync/phone-sync";
import { useIsClient, useStored } from "@/components/ui/use-stored";
import type { EngineState } from "./local-engine";
import type { LengthUnit } from "@/lib/lash";

// Dexie, the outbox, the sync client and the validation they run: loaded behind the first paint,
// and only by a page that needs the phone's records (see needsLocalDb)
const LocalEngine = lazy(() => import("./local-engine"));
// the kept copies of what the screens read through the API: only a signed-in phone has any
const PersistQueries = lazy(() => import("./persist-queries").then((m) => ({ default: m.PersistQueries })));

/**
 * Pages that read no local records: the landing page, the account pages and a review opened with a
 * signal (it reads the server through the API; it asks for the database when it writes or has no
 * signal). They never load the local database or the sync client.
 */
const WITHOUT_LOCAL_DB = [
  "/",
  "/review",
  "/sign-in",
  "/sign-up",
  "/forgot-password",
  "/reset-password",
  "/verify",
  "/invite",
  "/unsubscribe",
  "/offline",
];
export function needsLocalDb(path: string): boolean {
  return !WITHOUT_LOCAL_DB.some((p) => path === p || (p !== "/" && path.startsWith(`${p}/`)));
}

/**
 * The phone's side of the app: who is signed in (kept locally so the garage screens open with no
 * signal), their local database and the sync loop (components/sync/local-engine, loaded on demand).
 */
export interface LocalUser {
  id: string;
  name: string;
  email: string;
  displayUnit: LengthUnit;
}

interface LocalContext {
  user: LocalUser | null;
  /** false until the stored identity has been read */
  ready: boolean;
  /** the phone's records: null until the local database has loaded (or on a page without it) */
  db: LocalDb | null;
  /** Dexie's liveQuery, from the same module as db (components/sync/use-live-query reads it) */
  live: EngineState["live"] | null;
  /** load the local database on a page that does not by itself (a review that writes), and wait for it */
  needDb: () => Promise<LocalDb>;
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

/** What the screens need of the phone's side: it changes with the user or the database, not with every saved change. */
export type LocalCore = Pick<LocalContext, "user" | "ready" | "db" | "live" | "needDb" | "syncNow" | "forget">;
const CoreCtx = createContext<LocalCore | null>(null);
const USER_KEY = "lashwright.user";
const REVOKED_KEY = "lashwright.revoked";

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
  const [engine, setEngine] = useState<EngineState | null>(null);
  const engineNow = useRef<EngineState | null>(null);
  const waiters = useRef<((db: LocalDb) => void)[]>([]);
  const onEngine = useCallback((e: EngineState | null) => {
    engineNow.current = e;
    setEngine(e);
    if (e) for (const w of waiters.current.splice(0)) w(e.db);
  }, []);
  // once a page of this visit needed the database it stays open: the next page reuses it
  const path = usePathname();
  const [asked, setAsked] = useState(false);
  const wanted = asked || needsLocalDb(path);
  const needDb = useCallback(() => {
    if (engineNow.current) return Promise.resolve(engineNow.current.db);
    setAsked(true);
    return new Promise<LocalDb>((resolve) => waiters.current.push(resolve));
  }, []);

  // The session was ended elsewhere: wipe this user's copy, keep the unsent work for their next
  // sign-in here (lib/sync/phone-sync.ts wipeRevoked), drop the kept copies of shared checks and clubs
  // and the identity, and say what happened. The kept queries' writer is throttled (1 s): a write
  // already scheduled may land after the first delete, hence the second.
  const revoke = useCallback(async () => {
    setState("signed-out");
    if (!userId) return;
    const wipe = async () => {
      const [{ wipeRevoked }, { openLocalDb }] = await Promise.all([
        import("@/lib/sync/phone-sync"),
        import("@/lib/sync/local-db"),
      ]);
      const db = engineNow.current?.db ?? openLocalDb(userId);
      return wipeRevoked(db);
    };
    const kept = await wipe().catch(() => ({ changes: 0, photos: 0 }));
    storeRevoked({ email: user?.email ?? "", ...kept });
    storeUser(null);
    const cache = `lashwright-cache-${userId}`;
    await del(cache).catch(() => undefined);
    setTimeout(() => void del(cache).catch(() => undefined), 2_000);
  }, [storeRevoked, storeUser, user?.email, userId]);
  const revokeNow = useRef(revoke);
  useEffect(() => {
    revokeNow.current = revoke;
  }, [revoke]);
  const onRevoked = useCallback(() => revokeNow.current(), []);

  // The identity: the stored one at once, then the server's word when it can be reached, asked
  // again on each new page: if the session now belongs to someone else (a sign-in link opened, a
  // sign-in in another tab), the header, the local database and the sync follow it at once.
  const askAgain = path;
  useEffect(() => {
    // next-auth's session answer first: it is 200 with no user when nobody is signed in, so a
    // visitor's page logs no failed request; only a signed-in phone asks the account route. A cookie
    // minted before a sign-out everywhere or a new password answers { revoked: true }.
    fetch("/api/auth/session", { credentials: "same-origin" })
      .then(async (res) => (await res.json().catch(() => ({}))) as { user?: unknown; revoked?: boolean })
      .then((s) =>
        s.revoked
          ? "revoked"
          : s.user
            ? fetch("/api/account", { credentials: "same-origin" })
            : new Response(null, { status: 401 }),
      )
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
        if (!prev || prev.id !== keep.id || prev.name !== keep.name || prev.displayUnit !== keep.displayUnit)
          storeUser(keep);
        storeRevoked(null);
      })
      .catch(() => setState("offline"));
  }, [storeUser, storeRevoked, askAgain]);

  // Ask the browser to keep our data; the answer is shown in the status line.
  useEffect(() => {
    if (!navigator.storage?.persist) return;
    navigator.storage
      .persisted()
      .then((already) => (already ? setPersisted(true) : navigator.storage.persist().then(setPersisted)));
  }, []);

  const syncNow = useCallback(async () => {
    await engineNow.current?.syncNow();
  }, []);
  const retry = useCallback(async (seq: number) => void (await engineNow.current?.retry(seq)), []);
  const discard = useCallback(async (seq: number) => void (await engineNow.current?.discard(seq)), []);

  // Signing out leaves nothing of this user on the phone: their local database (records and
  // outbox), the kept copies of other members' shared checks, and the stored identity (OWASP ASVS
  // 5.0 V14 Data Protection, V7 Session Management: sign-out ends what the session could read).
  const forget = useCallback(async () => {
    if (userId) {
      engineNow.current?.db.close();
      const deleteDb = import("dexie").then(({ default: Dexie }) => Dexie.delete(`lashwright-${userId}`));
      await Promise.all([deleteDb, del(`lashwright-cache-${userId}`)]).catch(() => undefined);
    }
    storeUser(null);
  }, [storeUser, userId]);

  const e = engine && userId ? engine : null;
  const value: LocalContext = {
    user,
    ready,
    db: e?.db ?? null,
    live: e?.live ?? null,
    needDb,
    state,
    retryAt: e?.retryAt ?? null,
    limited: e?.limited ?? false,
    waiting: e?.waiting ?? 0,
    lastSyncAt: e?.lastSyncAt ?? null,
    held: e?.held ?? NONE,
    persisted,
    dbNotice: e?.dbNotice ?? null,
    syncNow,
    retry,
    discard,
    forget,
    revoked,
  };
  // the screens read this one: a tap's new outbox entry changes the counts above, and only the
  // frame's sync line shows them, so the screen is not drawn again for it
  const { db, live } = value;
  const core = useMemo<LocalCore>(
    () => ({ user, ready, db, live, needDb, syncNow, forget }),
    [user, ready, db, live, needDb, syncNow, forget],
  );
  return (
    <CoreCtx.Provider value={core}>
      <Ctx.Provider value={value}>
        {ready && userId && (
          <Suspense fallback={null}>
            <PersistQueries userId={userId} />
          </Suspense>
        )}
        {ready && userId && wanted && (
          <Suspense fallback={null}>
            <LocalEngine
              key={userId}
              userId={userId}
              state={state}
              setState={setState}
              onChange={onEngine}
              onRevoked={onRevoked}
            />
          </Suspense>
        )}
        {children}
      </Ctx.Provider>
    </CoreCtx.Provider>
  );
}

const NONE: OutboxEntry[] = [];

export function useLocal(): LocalContext {
  const v = useContext(Ctx);
  if (!v) throw new Error("useLocal outside LocalProvider");
  return v;
}

/** The user, the local database and the sync trigger, without the sync's counts (see LocalCore). */
export function useLocalCore(): LocalCore {
  const v = useContext(CoreCtx);
  if (!v) throw new Error("useLocalCore outside LocalProvider");
  return v;
}
