import Dexie, { type EntityTable } from "dexie";

/**
 * The phone's copy of the user's records and the outbox, in IndexedDB. Every screen in the garage
 * reads from here, so it behaves the same with or without a signal. One database per signed-in
 * user, so two people sharing a phone never see each other's work. Versioned like the server's
 * schema: a new Dexie version with an upgrade function for each change.
 */
export interface LocalEngine {
  id: string;
  name: string;
  cylinders: number;
  intakePerCylinder: number;
  exhaustPerCylinder: number;
  firingOrder: number[];
  firingAngles: number[] | null;
  timing: { ivo: number; ivc: number; evo: number; evc: number };
  intake: { min: number; max: number; target?: number };
  exhaust: { min: number; max: number; target?: number };
  measuredHot: boolean;
  shims: { min: number; max: number; step: number } | { sizes: number[] };
  shimDiameter: number | null;
  assembledShim: number | null;
  displayUnit: "mm" | "in";
  odometerUnit: "km" | "mi" | "h";
  mirrored: boolean;
  version?: number;
}

export type CheckStatus = "measuring" | "planned" | "fitting" | "verifying" | "closed";

export interface LocalCheck {
  id: string;
  engineId: string;
  odometer: number;
  measuredHot: boolean;
  status: CheckStatus;
  notes: string | null;
  startedAt: string | Date;
  closedAt: string | Date | null;
  version?: number;
}

export interface LocalReading {
  checkId: string;
  valve: string;
  round: number;
  installedStamp: number | null;
  installedMicrometer: number | null;
  feelerGo: number | null;
  feelerNoGo: number | null;
  measured: number | null;
  method: "feeler" | "typed";
  fittedShim: number | null;
  version?: number;
}

export interface LocalTrayItem {
  id: string;
  size: number;
  measuredSize: boolean;
  count: number;
  shimDiameter: number | null;
  version?: number;
}

export interface LocalComment {
  id: string;
  checkId: string;
  authorId: string;
  valve: string | null;
  body: string;
  createdAt: string | Date;
  version?: number;
}

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
}

export interface OutboxEntry {
  seq?: number;
  mutationId: number;
  name: string;
  args: unknown;
  createdAt: number;
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
  return db;
}

export async function getMeta<T>(db: LocalDb, key: string): Promise<T | undefined> {
  return (await db.meta.get(key))?.value as T | undefined;
}

export async function setMeta(db: LocalDb, key: string, value: unknown): Promise<void> {
  await db.meta.put({ key, value });
}
