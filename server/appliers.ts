import "server-only";
import type { MutationArgs, MutationName } from "@/lib/sync/mutations";
import type { ReadingInput } from "@/lib/schemas/records";
import type { EngineRow } from "@/db/schema";
import {
  getCheckRow,
  getEngineRow,
  getTrayRow,
  putCheck,
  putEngine,
  putTrayItem,
  removeCheck,
  removeEngine,
  removeTrayItem,
  writeReadings,
} from "@/db/queries/garage";
import { insertComment, writeVerdict } from "@/db/queries/clubs";
import { conflict, invalid, notFound } from "@/lib/errors";
import {
  commentClub,
  ownCheckAndEngine,
  ownOrNewCheck,
  ownOrNewEngine,
  ownOrNewTrayItem,
  ownEngine,
  readableCheck,
  shareFor,
} from "./access";
import { checkReadingsFit } from "./engines";
import { noticeNewComment, noticeVerdict } from "./review";
import { applyAsk, applyMove, applyOffer, applyWithdrawOffer } from "./pool";
import { kickPhotoSweep } from "./photos";
import type { WriteCtx } from "./write";
import { nextVersion } from "@/db/versions";
import { onWritePath } from "@/db/write-path";
import { phase } from "./timing";

/**
 * The one write path: each outbox mutation name and the function that applies it. The sync push
 * and the REST write routes both come here. Every applier authorises through server/access.ts
 * with the transaction it was given, so the decision and the change are one transaction and no
 * second connection is ever asked for. The table's type names every mutation of
 * lib/sync/mutations.ts: one added there without an applier here does not compile.
 */
/** A deleted check's photos leave the object store after the commit; the answer does not wait for it. */
const sweepAfterDelete = async () => void kickPhotoSweep();

type Applier<N extends MutationName> = (w: WriteCtx, a: MutationArgs<N>) => Promise<void>;

/** Readings of one check in one go: the owner's check, values that fit its engine, one upsert. */
async function applyReadings(w: WriteCtx, checkId: string, rs: ReadingInput[]) {
  const { engine } = await ownCheckAndEngine(w.tx, w.user, checkId);
  phase("check and engine read");
  checkReadingsFit(engine!, rs);
  phase("range check");
  await writeReadings(w.tx, w.user.id, w.version, checkId, rs);
}

/**
 * Readings of one check of which some may be refused, with what applying each alone, in order,
 * comes to (the table's "reading.put/1" one at a time), in a few statements rather than several a
 * reading: the owner's check and its engine read once (a reading changes neither), each reading
 * checked alone against them, and the others written in order, in batches that never hold one valve
 * and round twice, so every value replaced reaches the history as it would one at a time. Answers,
 * by position, the error each refused reading would have thrown (undefined: written). What is not
 * a refusal (`isRefusal`: a failure of the moment, a bug) is thrown, and the caller, whose
 * savepoint then rolls this back, applies the readings one by one to find it.
 */
export async function applyReadingsAlone(
  w: WriteCtx,
  run: MutationArgs<"reading.put/1">[],
  isRefusal: (e: unknown) => boolean,
): Promise<unknown[]> {
  const checkId = run[0]?.checkId;
  if (checkId === undefined || run.some((a) => a.checkId !== checkId)) throw new Error("readings of one check only");
  let engine: EngineRow | null;
  try {
    ({ engine } = await ownCheckAndEngine(w.tx, w.user, checkId));
  } catch (e) {
    if (!isRefusal(e)) throw e;
    return run.map(() => e);
  }
  const refusals = run.map((a) => {
    try {
      checkReadingsFit(engine!, [a.reading]);
      return undefined;
    } catch (e) {
      if (!isRefusal(e)) throw e;
      return e;
    }
  });
  let batch: ReadingInput[] = [];
  const keys = new Set<string>();
  // the table's own readings, batched: on the write path like every applier (db/write-path.ts)
  const flush = async () => {
    if (batch.length)
      await onWritePath("the applier table", () => writeReadings(w.tx, w.user.id, w.version, checkId, batch));
    batch = [];
    keys.clear();
  };
  for (const [i, a] of run.entries()) {
    if (refusals[i] !== undefined) continue;
    const key = `${a.reading.valve}#${a.reading.round}`;
    if (keys.has(key)) await flush();
    keys.add(key);
    batch.push(a.reading);
  }
  await flush();
  return refusals;
}

async function putOwnCheck(w: WriteCtx, a: MutationArgs<"check.put/2">) {
  await ownEngine(w.tx, w.user, a.engineId);
  const existing = await ownOrNewCheck(w.tx, w.user, a.id);
  if (existing && existing.engineId !== a.engineId) throw notFound("check");
  await putCheck(w.tx, w.user.id, w.version, a.id, a.engineId, a, existing);
}

/** Every version of an engine: what an older version does not carry keeps its stored value. */
async function putOwnEngine(w: WriteCtx, a: MutationArgs<"engine.put/1" | "engine.put/2" | "engine.put/3">) {
  await ownOrNewEngine(w.tx, w.user, a.id);
  await putEngine(w.tx, w.user.id, w.version, a.id, a);
}

export const APPLIERS: { readonly [N in MutationName]: Applier<N> } = {
  // an older phone's engine: where the shims sit is not in it, so the stored answer stays
  "engine.put/1": putOwnEngine,
  "engine.put/2": putOwnEngine,
  // with the side nearest the mechanic; /1 and /2 keep the stored side
  "engine.put/3": putOwnEngine,
  // Deleting what is already gone is harmless (a retried delete, or one from a second phone). So
  // is naming someone else's record: it answers exactly as a missing one, so no id can be probed.
  "engine.delete/1": async (w, a) => {
    if ((await getEngineRow(w.tx, a.id))?.ownerId !== w.user.id) return;
    await removeEngine(w.tx, w.user.id, w.version, a.id);
    w.later(sweepAfterDelete);
  },
  "check.put/1": (w, a) => putOwnCheck(w, a),
  // the same check with the day it was made, for one recorded after the fact (an import)
  "check.put/2": (w, a) => putOwnCheck(w, a),
  "check.delete/1": async (w, a) => {
    if ((await getCheckRow(w.tx, a.id))?.ownerId !== w.user.id) return;
    await removeCheck(w.tx, w.user.id, w.version, a.id);
    w.later(sweepAfterDelete);
  },
  "reading.put/1": (w, a) => applyReadings(w, a.checkId, [a.reading]),
  "tray.put/1": async (w, a) => {
    await ownOrNewTrayItem(w.tx, w.user, a.id);
    await putTrayItem(w.tx, w.user.id, w.version, a.id, a);
  },
  "tray.delete/1": async (w, a) => {
    if ((await getTrayRow(w.tx, a.id))?.ownerId !== w.user.id) return;
    await removeTrayItem(w.tx, w.user.id, w.version, a.id);
  },
  "comment.add/1": async (w, a) => {
    // the check is looked up in this transaction: the same push may have just created it
    const access = await readableCheck(w.tx, w.user, a.checkId);
    const { check } = access;
    // synced to the check's owner: a mentor's comment takes the owner's next change version
    const version = check.ownerId === w.user.id ? w.version : await nextVersion(w.tx, check.ownerId);
    const added = await insertComment(w.tx, version, a.checkId, w.user.id, commentClub(access), a);
    if (added === "again") return; // the same comment sent twice
    // dropping it silently would tell the phone its comment was stored when it was not
    if (added === "taken") throw conflict("That comment id is already used: send the comment with a new id");
    w.later(() => noticeNewComment(check, w.user, a.body));
  },
  "verdict.set/1": async (w, a) => {
    const { check } = await shareFor(w.tx, w.user, a.shareId, "mentor");
    await writeVerdict(w.tx, w.version, a.shareId, w.user.id, a.verdict);
    w.later(() => noticeVerdict(check, w.user.name, a.verdict));
  },
  "pool.offer/1": (w, a) => applyOffer(w, a),
  "pool.withdraw/1": (w, a) => applyWithdrawOffer(w, a.id),
  "borrow.ask/1": (w, a) => applyAsk(w, a),
  "borrow.move/1": (w, a) => applyMove(w, a),
};

type RunApplier<N extends MutationName> = (w: WriteCtx, run: MutationArgs<N>[]) => Promise<void>;

/**
 * The mutations the table also applies as a run in one call: a check's readings (a measured engine
 * is up to 200 of them) go in as one locking read and one multi-row upsert per check, not one each.
 */
const RUNS: { readonly [N in MutationName]?: RunApplier<N> } = {
  "reading.put/1": async (w, run) => {
    // grouped by check in the order first seen; within a check the order is kept (the last write wins)
    const byCheck = new Map<string, ReadingInput[]>();
    for (const a of run) byCheck.set(a.checkId, [...(byCheck.get(a.checkId) ?? []), a.reading]);
    for (const [checkId, rs] of byCheck) await applyReadings(w, checkId, rs);
  },
};

/**
 * Apply a run of one mutation inside the caller's write: batched where the table has a run applier
 * (RUNS), else one by one. The sync push's runs of readings and the REST readings route come here.
 */
export async function applyRun<N extends MutationName>(w: WriteCtx, name: N, run: MutationArgs<N>[]): Promise<void> {
  if (!Object.hasOwn(APPLIERS, name)) throw invalid(`unknown change "${String(name)}"`);
  const batch = Object.hasOwn(RUNS, name) ? (RUNS[name] as RunApplier<N> | undefined) : undefined;
  if (batch) return onWritePath("the applier table", () => batch(w, run));
  for (const a of run) await onWritePath("the applier table", () => (APPLIERS[name] as Applier<N>)(w, a));
}

/**
 * Apply one mutation by name, inside the caller's write. Only the table's own names: a name every
 * object inherits ("constructor", "toString") is refused like any unknown one, never called.
 */
export function apply<N extends MutationName>(w: WriteCtx, name: N, args: MutationArgs<N>): Promise<void> {
  if (!Object.hasOwn(APPLIERS, name)) return Promise.reject(invalid(`unknown change "${String(name)}"`));
  return onWritePath("the applier table", () => (APPLIERS[name] as Applier<N>)(w, args));
}
