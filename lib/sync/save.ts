import type { MutationArgs } from "./mutations";
import { queueChange, writeTables } from "./outbox";
import { DEFAULT_TIMING, LashInputError, sameLength, type NearSide, type ShimMove, type ShimPosition } from "../lash";
import { swapEffects, workOrderKey, type WorkOrderState } from "../check/fit";
import { CHECK_PLAIN_FIELDS, READING_VALUE_FIELDS } from "../schemas/records";
import { pick } from "../pick";
import {
  getMeta,
  setMeta,
  type CheckStatus,
  type LocalCheck,
  type LocalDb,
  type LocalEngine,
  type LocalReading,
} from "./local-db";

/**
 * Every change the garage screens make, each a local write plus an outbox entry (lib/sync/outbox).
 * The shapes are the server's, so a pulled record and a local one look alike.
 */
type EngineArgs = Omit<MutationArgs<"engine.put/3">, "shimPosition" | "nearSide"> & {
  shimPosition?: ShimPosition | null;
  nearSide?: NearSide | null;
};

/** The engine profile, with where its shims sit (null: not said) and the side nearest the mechanic. */
export function saveEngine(db: LocalDb, e: EngineArgs) {
  return queueChange(
    db,
    "engine.put/3",
    { ...e, shimPosition: e.shimPosition ?? null, nearSide: e.nearSide ?? "exhaust" },
    async (a) => {
      const local: LocalEngine = {
        ...a,
        firingAngles: a.firingAngles ?? null,
        timing: a.timing ?? DEFAULT_TIMING,
        shimDiameter: a.shimDiameter ?? null,
        assembledShim: a.assembledShim ?? null,
      };
      await db.engines.put(local);
    },
  );
}

export function deleteEngine(db: LocalDb, id: string) {
  return queueChange(db, "engine.delete/1", { id }, async () => {
    const cs = await db.checks.where("engineId").equals(id).primaryKeys();
    for (const c of cs) await db.readings.where("checkId").equals(c).delete();
    await db.checks.bulkDelete(cs);
    await db.engines.delete(id);
  });
}

/** A check; `madeAt` only for one recorded after the fact (an import), which names its own day. */
export async function saveCheck(
  db: LocalDb,
  c: {
    id: string;
    engineId: string;
    odometer: number;
    measuredHot: boolean;
    notes?: string | null;
    status?: CheckStatus;
  },
  madeAt?: string,
) {
  const existing = await db.checks.get(c.id);
  const args = {
    id: c.id,
    engineId: c.engineId,
    odometer: c.odometer,
    measuredHot: c.measuredHot,
    notes: c.notes ?? existing?.notes ?? null,
    status: c.status ?? existing?.status ?? "measuring",
  } as MutationArgs<"check.put/1">;
  const local = (a: MutationArgs<"check.put/1">, startedAt: string | Date) => {
    const closedAt = a.status !== "closed" ? null : (madeAt ?? new Date().toISOString());
    return db.checks.put({
      ...pick(a, CHECK_PLAIN_FIELDS),
      notes: a.notes ?? null,
      startedAt,
      closedAt,
    } satisfies LocalCheck);
  };
  // the server keeps the day as given, and so does the phone
  if (madeAt) return queueChange(db, "check.put/2", { ...args, startedAt: madeAt }, (a) => local(a, a.startedAt!));
  return queueChange(db, "check.put/1", args, (a) => local(a, existing?.startedAt ?? new Date().toISOString()));
}

export async function setCheckStatus(db: LocalDb, checkId: string, status: CheckStatus) {
  const c = await db.checks.get(checkId);
  if (!c) return;
  return saveCheck(db, { ...c, status });
}

export type ReadingPatch = Omit<LocalReading, "checkId" | "version">;
type ReadingPatchInput = Pick<ReadingPatch, "valve" | "round" | "method"> & Partial<ReadingPatch>;

export function saveReading(db: LocalDb, checkId: string, r: ReadingPatch) {
  // only the reading's own fields: a patch built from a stored reading also carries checkId and version
  const reading = {
    valve: r.valve,
    round: r.round,
    ...Object.fromEntries(READING_VALUE_FIELDS.map((f) => [f, r[f]])),
  } as ReadingPatch;
  return queueChange(db, "reading.put/1", { checkId, reading } as MutationArgs<"reading.put/1">, async () => {
    await db.readings.put({ checkId, ...reading });
  });
}

/**
 * Past checks brought in from a file: each a closed check on its own day with its readings, all
 * written (checks, readings and their outbox entries) in one transaction, so a failure part way
 * leaves nothing behind. They reach the server through the outbox like every other change. A day
 * is stored as noon UTC, so it reads as the same day in any nearby time zone.
 */
export function importChecks(
  db: LocalDb,
  engine: Pick<LocalEngine, "id" | "measuredHot">,
  checks: { date: string; odometer: number; notes: string | null; readings: ReadingPatchInput[] }[],
) {
  return db.transaction("rw", writeTables(db), async () => {
    const ids: string[] = [];
    for (const c of checks) {
      const id = crypto.randomUUID();
      await saveCheck(
        db,
        {
          id,
          engineId: engine.id,
          odometer: c.odometer,
          measuredHot: engine.measuredHot,
          notes: c.notes,
          status: "closed",
        },
        `${c.date}T12:00:00.000Z`,
      );
      for (const r of c.readings)
        await saveReading(db, id, {
          installedStamp: null,
          installedMicrometer: null,
          feelerGo: null,
          feelerNoGo: null,
          measured: null,
          fittedShim: null,
          ...r,
        });
      ids.push(id);
    }
    return ids;
  });
}

export function saveTrayItem(
  db: LocalDb,
  t: { id: string; size: number; measuredSize: boolean; count: number; shimDiameter?: number | null },
) {
  return queueChange(
    db,
    "tray.put/1",
    { ...t, shimDiameter: t.shimDiameter ?? null } as MutationArgs<"tray.put/1">,
    async (a) => {
      await db.tray.put({ ...pick(a, ["id", "size", "measuredSize", "count"]), shimDiameter: a.shimDiameter ?? null });
    },
  );
}

/** Add (or with a negative delta, take) shims of one size on the tray. */
export async function adjustTray(db: LocalDb, size: number, delta: number) {
  const all = await db.tray.toArray();
  const item = all.find((t) => sameLength(t.size, size));
  if (item) return saveTrayItem(db, { ...item, count: Math.max(0, item.count + delta) });
  if (delta > 0) return saveTrayItem(db, { id: crypto.randomUUID(), size, measuredSize: false, count: delta });
}

/**
 * Fitting begins: the check moves to "fitting" and the swap list is kept on the phone with no
 * ticks, in one transaction, so a reload mid-fit shows the same list with the same ticks. A list
 * still being worked through is kept as it is: only a finished one gives way to a new round's.
 */
export function beginFit(db: LocalDb, checkId: string, moves: ShimMove[]) {
  return db.transaction("rw", writeTables(db), async () => {
    const open = await getMeta<WorkOrderState>(db, workOrderKey(checkId));
    if (open && !open.moves.every((_, i) => open.done[i])) return;
    await setMeta(db, workOrderKey(checkId), { moves, done: moves.map(() => false) } satisfies WorkOrderState);
    await setCheckStatus(db, checkId, "fitting");
  });
}

/**
 * Tick (or untick) one swap: the tray move, the valve's fitted shim and the tick itself are written
 * in one transaction, and the tick's state is read inside it, so a page closed half-way or a double
 * tap can never take a shim from the tray twice.
 */
export function toggleSwap(db: LocalDb, checkId: string, index: number): Promise<boolean> {
  return toggleSwaps(db, checkId, [index]);
}

/**
 * Tick (or untick) one change of the Fit step: the moves it holds (lib/check/fit, fitTicks) all
 * together, in one transaction. Ticked when any of them is not yet done; unticking goes backwards.
 */
export function toggleSwaps(db: LocalDb, checkId: string, indexes: number[]): Promise<boolean> {
  return db.transaction("rw", writeTables(db), async () => {
    const order = await getMeta<WorkOrderState>(db, workOrderKey(checkId));
    if (!order || indexes.length === 0 || indexes.some((i) => !order.moves[i]))
      throw new LashInputError("this swap is not on the list: open the Fit step again from the plan");
    const on = indexes.some((i) => !order.done[i]);
    const done = order.moves.map((_, j) => !!order.done[j]);
    for (const index of on ? indexes : [...indexes].reverse()) {
      if (done[index] === on) continue;
      const effects = swapEffects(order.moves[index]!, on);
      for (const t of effects.tray) await adjustTray(db, t.size, t.delta);
      if (effects.fit) {
        const { valveId, shim } = effects.fit;
        const latest = (
          await db.readings
            .where("checkId")
            .equals(checkId)
            .filter((r) => r.valve === valveId)
            .toArray()
        ).sort((a, b) => b.round - a.round)[0];
        if (!latest) throw new LashInputError(`${valveId} has no reading in this check to fit a shim to`);
        await saveReading(db, checkId, { ...latest, fittedShim: shim });
      }
      done[index] = on;
    }
    await setMeta(db, workOrderKey(checkId), { ...order, done } satisfies WorkOrderState);
    return on;
  });
}

/** Tick (or untick) one task of an under-bucket fit (cams out, cams in...), kept with the swap list. */
export function toggleFitTask(db: LocalDb, checkId: string, key: string): Promise<boolean> {
  return db.transaction("rw", writeTables(db), async () => {
    const order = await getMeta<WorkOrderState>(db, workOrderKey(checkId));
    if (!order) throw new LashInputError("there is no fit under way: open the Fit step again from the plan");
    const tasks = new Set(order.tasks ?? []);
    const on = !tasks.has(key);
    if (on) tasks.add(key);
    else tasks.delete(key);
    await setMeta(db, workOrderKey(checkId), { ...order, tasks: [...tasks] } satisfies WorkOrderState);
    return on;
  });
}

/** The re-check's two-turn check after an under-bucket fit, said done (or not). */
export function setTurned(db: LocalDb, checkId: string, turned: boolean) {
  return db.transaction("rw", writeTables(db), async () => {
    const order = await getMeta<WorkOrderState>(db, workOrderKey(checkId));
    if (!order) throw new LashInputError("there is no fit under way: open the Fit step again from the plan");
    await setMeta(db, workOrderKey(checkId), { ...order, turned } satisfies WorkOrderState);
  });
}

/** A comment by the check's owner or a mentor, kept here until the next sync sends it. */
export function addComment(
  db: LocalDb,
  c: { id: string; checkId: string; authorId: string; body: string; valve: string | null },
) {
  return queueChange(
    db,
    "comment.add/1",
    { id: c.id, checkId: c.checkId, body: c.body, valve: c.valve } as MutationArgs<"comment.add/1">,
    async (a) => {
      await db.comments.put({
        id: a.id,
        checkId: a.checkId,
        authorId: c.authorId,
        valve: a.valve ?? null,
        body: a.body,
        createdAt: new Date().toISOString(),
      });
    },
  );
}

/** A mentor's verdict on a share; only the outbox holds it until the server has it. */
export function giveVerdict(db: LocalDb, shareId: string, verdict: MutationArgs<"verdict.set/1">["verdict"]) {
  return queueChange(db, "verdict.set/1", { shareId, verdict }, async () => undefined);
}

/** Club pool changes: the server holds the pool, so only the outbox keeps them until the next sync. */
export function offerToClub(db: LocalDb, o: MutationArgs<"pool.offer/1">) {
  return queueChange(db, "pool.offer/1", o, async () => undefined);
}

export function withdrawOffer(db: LocalDb, id: string) {
  return queueChange(db, "pool.withdraw/1", { id }, async () => undefined);
}

export function askToBorrow(db: LocalDb, b: MutationArgs<"borrow.ask/1">) {
  return queueChange(db, "borrow.ask/1", b, async () => undefined);
}

export function moveLoan(db: LocalDb, m: MutationArgs<"borrow.move/1">) {
  return queueChange(db, "borrow.move/1", m, async () => undefined);
}
