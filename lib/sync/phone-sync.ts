import { PUSH_BATCH } from "./mutations";
import { uploadPhotos } from "./photos";
import { pendingKey, readingKey } from "./pending";
import type { PullAnswer, PushAnswer } from "../api/client";
import { syncCalls } from "../api/sync-calls";
import { Offline, retryAfterMs, retryDelay, ServerBusy, SessionRevoked, SignedOut, type Fetch } from "./transport";
import { getMeta, setMeta, type OutboxEntry, type LocalDb } from "./local-db";

/**
 * The client side of the sync protocol, one module. Push sends the outbox in order, in batches, and
 * deletes entries only once the server says it applied them (a refused one is kept, marked, until
 * the mechanic decides); a 401 keeps everything and asks for
 * sign-in; any other failure keeps everything for the next try. Pull then brings what changed on
 * the server since the cursor, skipping records that still have local changes waiting.
 */
export type SyncState = "idle" | "syncing" | "offline" | "signed-out" | "busy" | "error";

export { Offline, retryAfterMs, retryDelay, ServerBusy, SessionRevoked, SignedOut };

/** A mutation the server did not apply, with its reason (the contract's push answer). */
export type Rejected = PushAnswer["rejected"][number];

export interface SyncStatus {
  state: SyncState;
  lastSyncAt: number | null;
  rejected: Rejected[];
}

export async function clientId(db: LocalDb): Promise<string> {
  let id = await getMeta<string>(db, "clientId");
  if (!id) {
    id = crypto.randomUUID();
    await setMeta(db, "clientId", id);
  }
  return id;
}

const isRefused = (m: OutboxEntry) => m.held?.kind === "refused";

/**
 * Push the outbox in batches. An entry leaves the outbox only once the server says it applied it;
 * one it refused for good stays, marked with the reason, and is no longer sent until the mechanic
 * retries it (retryHeld) or discards it (discardHeld); one it could not take yet is marked and sent
 * again, in its place, at the next sync. Nothing queued is deleted because the server said no.
 */
export async function pushAll(
  db: LocalDb,
  fetcher: Fetch,
  base = "",
): Promise<{ acknowledged: number; rejected: Rejected[]; later?: Rejected }> {
  const id = await clientId(db);
  let acknowledged = 0;
  const rejected: Rejected[] = [];
  for (;;) {
    const batch = await db.outbox
      .orderBy("mutationId")
      .filter((m) => !isRefused(m))
      .limit(PUSH_BATCH)
      .toArray();
    if (batch.length === 0) break;
    const r = await syncCalls.push(fetcher, base, {
      clientId: id,
      mutations: batch.map((m) => ({ id: m.mutationId, name: m.name, args: m.args })),
    });
    rejected.push(...r.rejected);
    const refused = new Map(r.rejected.map((x) => [x.id, x.reason]));
    const at = Date.now();
    let done = 0;
    await db.transaction("rw", db.outbox, async () => {
      for (const m of batch) {
        if (m.mutationId > r.lastMutationId) continue;
        const reason = refused.get(m.mutationId);
        if (reason !== undefined) await db.outbox.update(m.seq!, { held: { kind: "refused", reason, at } });
        else await db.outbox.delete(m.seq!);
        done++;
      }
      const later = r.later && batch.find((m) => m.mutationId === r.later!.id);
      if (later) await db.outbox.update(later.seq!, { held: { kind: "later", reason: r.later!.reason, at } });
    });
    acknowledged += done;
    // the server is holding one back, or acknowledged nothing new: stop rather than loop (next sync)
    if (r.later) return { acknowledged, rejected, later: r.later };
    if (done === 0) break;
  }
  return { acknowledged, rejected };
}

/** The outbox entries the server did not apply, oldest first. */
export async function heldEntries(db: LocalDb): Promise<OutboxEntry[]> {
  return (await db.outbox.orderBy("mutationId").toArray()).filter((m) => m.held);
}

/**
 * Send a refused change again: it takes the next mutation id (the server has moved past its old
 * one, and would skip it as a replay), so it goes after everything queued since.
 */
export async function retryHeld(db: LocalDb, seq: number): Promise<void> {
  await db.transaction("rw", db.outbox, db.meta, async () => {
    const m = await db.outbox.get(seq);
    if (!m?.held) return;
    const next = (await getMeta<number>(db, "nextMutationId")) ?? 1;
    await setMeta(db, "nextMutationId", next + 1);
    await db.outbox.update(seq, { mutationId: next, held: undefined });
  });
}

/**
 * The mechanic chose to drop a change the server did not take. The phone's copy of that record
 * still shows the change, and the server's unchanged row would never come in a pull after the
 * cursor: the cursor is cleared, so the next pull is a full one and brings the server's copy.
 */
export async function discardHeld(db: LocalDb, seq: number): Promise<void> {
  await db.transaction("rw", db.outbox, db.meta, async () => {
    const m = await db.outbox.get(seq);
    if (!m?.held) return;
    await db.outbox.delete(seq);
    await db.meta.delete("cursor");
  });
}

/** Ids of records with local changes still waiting, which a pull must not overwrite. */
async function pendingKeys(db: LocalDb) {
  const keys = new Set<string>();
  await db.outbox.each((m) => {
    const key = pendingKey(m.name, m.args);
    if (key) keys.add(key);
  });
  return keys;
}

export async function pullOnce(db: LocalDb, fetcher: Fetch, base = ""): Promise<PullAnswer> {
  // a number is an older app's cursor: the server answers it with one full pull
  const cursor = (await getMeta<string | number>(db, "cursor")) ?? null;
  const r = await syncCalls.pull(fetcher, base, { cursor });
  const pending = await pendingKeys(db);
  await db.transaction(
    "rw",
    [db.engines, db.checks, db.readings, db.tray, db.comments, db.meta, db.outbox],
    async () => {
      await db.engines.bulkPut(r.engines.filter((e) => !pending.has(`engine:${e.id}`)));
      await db.checks.bulkPut(r.checks.filter((c) => !pending.has(`check:${c.id}`)));
      await db.readings.bulkPut(
        r.readings
          .filter((x) => !pending.has(readingKey(x.checkId, x.valve, x.round)))
          .map(({ id: _serverId, ...x }) => {
            void _serverId;
            return x;
          }),
      );
      await db.tray.bulkPut(r.tray.filter((t) => !pending.has(`tray:${t.id}`)));
      await db.comments.bulkPut(r.comments);
      for (const t of r.tombstones) {
        if (t.entity === "engine") {
          const cs = await db.checks.where("engineId").equals(t.id).primaryKeys();
          for (const c of cs) await db.readings.where("checkId").equals(c).delete();
          await db.checks.bulkDelete(cs);
          await db.engines.delete(t.id);
        } else if (t.entity === "check") {
          await db.readings.where("checkId").equals(t.id).delete();
          await db.comments.where("checkId").equals(t.id).delete();
          await db.checks.delete(t.id);
        } else if (t.entity === "tray_item") await db.tray.delete(t.id);
      }
      await setMeta(db, "cursor", r.cursor);
    },
  );
  return r;
}

/** What of the phone's data is work not yet on the server, kept through a revoked session. */
const WORK_META = ["clientId", "nextMutationId", "rejected"];

/**
 * The session this phone syncs with was ended elsewhere (a sign-out everywhere, a new password, the
 * account gone): whoever holds the phone now may not be its owner, so the local copy of the user's
 * records stops being readable here (OWASP ASVS 5.0 V14 Data Protection, V7 Session Management).
 *
 * Work not yet on the server is never deleted silently (README "Working without a signal"): the outbox, photos not sent (or
 * refused, with their reason), the refusals and the ids that keep the outbox's order (clientId,
 * nextMutationId) stay, in this user's own database, and are sent when the same user signs in again
 * on this phone (another person signing in opens another database and never sends them). Everything
 * else goes: the engines, checks, readings, tray, comments, photos already sent and the pull cursor,
 * so the next sign-in pulls a full copy. Returns how much unsent work was kept.
 */
export async function wipeRevoked(db: LocalDb): Promise<{ changes: number; photos: number }> {
  return db.transaction(
    "rw",
    [db.engines, db.checks, db.readings, db.tray, db.comments, db.photos, db.meta, db.outbox],
    async () => {
      await Promise.all([
        db.engines.clear(),
        db.checks.clear(),
        db.readings.clear(),
        db.tray.clear(),
        db.comments.clear(),
      ]);
      await db.photos.where("state").equals("sent").delete();
      await db.meta.where("key").noneOf(WORK_META).delete();
      return { changes: await db.outbox.count(), photos: await db.photos.count() };
    },
  );
}

/**
 * Pull page after page until the server says there is no more. Each page is saved with its cursor
 * before the next is asked for, so a pull cut short by a lost signal goes on from there next time.
 */
export async function pullAll(db: LocalDb, fetcher: Fetch, base = ""): Promise<PullAnswer & { pages: number }> {
  // a bound on a server that kept answering "more" without moving on: the next sync goes on
  for (let pages = 1; ; pages++) {
    const before = await getMeta<string | number>(db, "cursor");
    const r = await pullOnce(db, fetcher, base);
    if (!r.more || r.cursor === before || pages >= 10_000) return { ...r, pages };
  }
}

/**
 * One full sync: push everything, send waiting photos, then pull every page. Throws SignedOut on
 * 401, Offline when there is no answer, ServerBusy when the server asks to come back later (503,
 * or 429 when this phone or account spent its write budget): what was not acknowledged stays in
 * the outbox, and the caller waits as asked before the next try. A photo that fails on the server
 * stays waiting for the next sync and does not keep the pull from running. A session ended
 * elsewhere (SessionRevoked) wipes the local copy first and keeps the unsent work.
 */
export async function syncOnce(db: LocalDb, fetcher: Fetch, base = "") {
  try {
    const pushed = await pushAll(db, fetcher, base);
    const photos = await uploadPhotos(db, fetcher, base).catch((e: unknown) => {
      if (e instanceof SignedOut) throw e;
      return { sent: 0, refused: 0, failed: 1 };
    });
    const pulled = await pullAll(db, fetcher, base);
    await setMeta(db, "lastSyncAt", Date.now());
    return { pushed, photos, pulled };
  } catch (e) {
    if (e instanceof SessionRevoked) await wipeRevoked(db);
    throw e;
  }
}
