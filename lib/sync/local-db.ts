import Dexie, { type EntityTable } from "dexie";
import type { z } from "zod";
import type { ValveTiming } from "../lash";
import type {
  CheckStatus,
  checkInput,
  commentInput,
  EngineInput,
  ReadingInput,
  trayItemInput,
} from "../schemas/records";

/**
 * The phone's copy of the user's records and the outbox, in IndexedDB. Every screen in the garage
 * reads from here, so it behaves the same with or without a signal. One database per signed-in
 * user, so two people sharing a phone never see each other's work. Versioned like the server's
 * schema: a new Dexie version with an upgrade function for each change.
 */
/**
 * The phone's records are the shared input schemas' shapes as stored: every optional field is
 * present (null when empty), plus the fields the server adds. Derived, not written again, so a
 * field added to a schema reaches the phone's types at once.
 */
type Stored<T> = { [K in keyof T]-?: undefined extends T[K] ? Exclude<T[K], undefined> | null : T[K] };
type WithId = { id: string; version?: number };

export type LocalEngine = Omit<Stored<EngineInput>, "id" | "timing"> & WithId & { timing: ValveTiming };

export type { CheckStatus };

export type LocalCheck = Omit<Stored<z.output<typeof checkInput>>, "id"> &
  WithId & {
    engineId: string;
    status: CheckStatus;
    startedAt: string | Date;
    closedAt: string | Date | null;
  };

export type LocalReading = Stored<ReadingInput> & { checkId: string; version?: number };

export type LocalTrayItem = Omit<Stored<z.output<typeof trayItemInput>>, "id"> & WithId;

export type LocalComment = Omit<Stored<z.output<typeof commentInput>>, "id"> &
  WithId & {
    checkId: string;
    /** null: the author deleted their account */
    authorId: string | null;
    createdAt: string | Date;
  };

/** A photo taken on this phone: kept here until the server has it, then kept as the local copy. */
export interface LocalPhoto {
  id: string;
  checkId: string;
  valve: string | null;
  commentId: string | null;
  blob: Blob;
  takenAt: number;
  state: "waiting" | "sent" | "refused";
  reason?: string;
  /** waiting because the account's photo space was full: the usage then, tried again once it shrinks or grows */
  held?: { usedBytes: number; quotaBytes: number };
}

export interface OutboxEntry {
  seq?: number;
  mutationId: number;
  name: string;
  args: unknown;
  createdAt: number;
  /**
   * Set when the server did not apply it. "refused": for good (the record is not the mechanic's,
   * a value the server will not take); it is no longer sent and waits for the mechanic to retry
   * or discard it. "later": the server could not take it yet; it is sent again at each sync.
   */
  held?: { kind: "refused" | "later"; reason: string; at: number };
}

export interface MetaEntry {
  key: string;
  value: unknown;
}

export type LocalDb = Dexie & {
  engines: EntityTable<LocalEngine, "id">;
  checks: EntityTable<LocalCheck, "id">;
  readings: Dexie.Table<LocalReading, [string, string, number]>;
  tray: EntityTable<LocalTrayItem, "id">;
  comments: EntityTable<LocalComment, "id">;
  outbox: EntityTable<OutboxEntry, "seq">;
  meta: EntityTable<MetaEntry, "key">;
  photos: EntityTable<LocalPhoto, "id">;
};

export function openLocalDb(userId: string, indexedDB?: IDBFactory, keyRange?: typeof IDBKeyRange): LocalDb {
  const db = new Dexie(`lashwright-${userId}`, indexedDB ? { indexedDB, IDBKeyRange: keyRange } : undefined) as LocalDb;
  db.version(1).stores({
    engines: "id, name",
    checks: "id, engineId, startedAt",
    readings: "[checkId+valve+round], checkId",
    tray: "id, size",
    comments: "id, checkId",
    outbox: "++seq, &mutationId",
    meta: "key",
  });
  // photos are their own queue: a blob is sent by itself, after the outbox (it may name a comment)
  db.version(2).stores({ photos: "id, checkId, state" });
  // engines learn where their shims sit; one kept from before is "not said" until the mechanic says
  db.version(3)
    .stores({})
    .upgrade((tx) =>
      tx
        .table("engines")
        .toCollection()
        .modify((e: { shimPosition?: unknown }) => {
          if (e.shimPosition === undefined) e.shimPosition = null;
        }),
    );
  // engines learn which side is nearest the mechanic; one kept from before has its exhausts nearest,
  // the way its diagram was always drawn
  db.version(4)
    .stores({})
    .upgrade((tx) =>
      tx
        .table("engines")
        .toCollection()
        .modify((e: { nearSide?: unknown }) => {
          if (e.nearSide == null) e.nearSide = "exhaust";
        }),
    );
  return db;
}

export async function getMeta<T>(db: LocalDb, key: string): Promise<T | undefined> {
  return (await db.meta.get(key))?.value as T | undefined;
}

export async function setMeta(db: LocalDb, key: string, value: unknown): Promise<void> {
  await db.meta.put({ key, value });
}
