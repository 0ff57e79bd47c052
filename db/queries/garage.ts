import "server-only";
import { phase } from "@/server/timing";
import { and, asc, desc, eq, getTableColumns, sql, type InferSelectModel, type SQL } from "drizzle-orm";
import type { MySqlTable } from "drizzle-orm/mysql-core";
import { format } from "mysql2";
import { DEFAULT_TIMING } from "@/lib/lash";
import { pick } from "@/lib/pick";
import {
  CHECK_PLAIN_FIELDS,
  ENGINE_LAYOUT_FIELDS,
  READING_VALUE_FIELDS,
  readingValues,
  type EngineInput,
  type ReadingInput,
} from "@/lib/schemas/records";
import { db, type Executor, type Tx } from "../connection";
import {
  checks,
  engines,
  readingHistory,
  readings,
  tombstones,
  trayItems,
  type CheckRow,
  type EngineRow,
  type ReadingRow,
  type TrayItemRow,
} from "../schema";

/**
 * The mechanic's own records. Every function takes the owner's id and scopes by it, so a query can
 * never return somebody else's rows; access rules beyond ownership live in server/access.ts.
 */

export function engineToApi(e: EngineRow) {
  return {
    ...pick(e, ENGINE_LAYOUT_FIELDS),
    firingAngles: e.firingAngles ?? null,
    timing: { ivo: e.ivo, ivc: e.ivc, evo: e.evo, evc: e.evc },
    intake: { min: e.intakeMin, max: e.intakeMax, ...(e.intakeTarget != null ? { target: e.intakeTarget } : {}) },
    exhaust: { min: e.exhaustMin, max: e.exhaustMax, ...(e.exhaustTarget != null ? { target: e.exhaustTarget } : {}) },
    measuredHot: e.measuredHot,
    shims: e.shimSizes ? { sizes: e.shimSizes } : { min: e.shimMin!, max: e.shimMax!, step: e.shimStep! },
    shimDiameter: e.shimDiameter,
    assembledShim: e.assembledShim,
    displayUnit: e.displayUnit,
    odometerUnit: e.odometerUnit,
    mirrored: e.mirrored,
    shimPosition: e.shimPosition ?? null,
    nearSide: e.nearSide,
    version: e.version,
    updatedAt: e.updatedAt,
  };
}
export type ApiEngine = ReturnType<typeof engineToApi>;

export function engineToRow(e: EngineInput) {
  const series =
    "sizes" in e.shims
      ? { shimSizes: e.shims.sizes, shimMin: null, shimMax: null, shimStep: null }
      : { shimSizes: null, shimMin: e.shims.min, shimMax: e.shims.max, shimStep: e.shims.step };
  return {
    name: e.name,
    cylinders: e.cylinders,
    intakePerCylinder: e.intakePerCylinder,
    exhaustPerCylinder: e.exhaustPerCylinder,
    firingOrder: e.firingOrder,
    firingAngles: e.firingAngles ?? null,
    ...(e.timing ?? DEFAULT_TIMING),
    intakeMin: e.intake.min,
    intakeMax: e.intake.max,
    intakeTarget: e.intake.target ?? null,
    exhaustMin: e.exhaust.min,
    exhaustMax: e.exhaust.max,
    exhaustTarget: e.exhaust.target ?? null,
    measuredHot: e.measuredHot,
    ...series,
    shimDiameter: e.shimDiameter ?? null,
    assembledShim: e.assembledShim ?? null,
    displayUnit: e.displayUnit,
    odometerUnit: e.odometerUnit,
    mirrored: e.mirrored,
    // absent from an older phone's "engine.put/1": the stored answer is kept (a new engine: not said)
    ...(e.shimPosition !== undefined ? { shimPosition: e.shimPosition } : {}),
    // absent from "engine.put/1" and "/2": the stored side is kept (a new engine: the exhausts)
    ...(e.nearSide != null ? { nearSide: e.nearSide } : {}),
  };
}

/** One page of a list, with one row more than asked for: the route says by it whether more follow. */
async function listPage<T extends MySqlTable>(
  table: T,
  where: SQL,
  order: [SQL, SQL],
  limit: number,
  offset: number,
): Promise<InferSelectModel<T>[]> {
  const rows = await db()
    .select()
    .from(table as MySqlTable)
    .where(where)
    .orderBy(...order)
    .limit(limit + 1)
    .offset(offset);
  return rows as InferSelectModel<T>[];
}

export async function listEngines(ownerId: string, limit: number, offset: number) {
  const where = eq(engines.ownerId, ownerId);
  return (await listPage(engines, where, [asc(engines.name), asc(engines.id)], limit, offset)).map(engineToApi);
}

/** A check's odometer with its engine's name and unit, in one read: what a notice names. */
export async function checkTitleRow(ex: Executor, checkId: string) {
  const [r] = await ex
    .select({ name: engines.name, odometer: checks.odometer, unit: engines.odometerUnit })
    .from(checks)
    .innerJoin(engines, eq(engines.id, checks.engineId))
    .where(eq(checks.id, checkId))
    .limit(1);
  return r;
}

/** One of the garage's rows by its id (the caller decides what its owner may see). */
async function rowById<T extends typeof engines | typeof checks | typeof trayItems>(
  ex: Executor,
  table: T,
  id: string,
): Promise<InferSelectModel<T> | undefined> {
  const [row] = await ex
    .select()
    .from(table as MySqlTable)
    .where(eq(table.id, id))
    .limit(1);
  return row as InferSelectModel<T> | undefined;
}

export const getEngineRow = (ex: Executor, engineId: string) => rowById(ex, engines, engineId);

/** Create or replace an engine; the caller has checked the id is the owner's or new. */
export async function putEngine(tx: Tx, ownerId: string, version: number, id: string, input: EngineInput) {
  const row = engineToRow(input);
  await tx
    .insert(engines)
    .values({ id, ownerId, ...row, version })
    .onDuplicateKeyUpdate({ set: { ...row, version } });
}

/** Remove an engine and its checks (the database cascades), leaving tombstones for the phones. */
export async function removeEngine(tx: Tx, ownerId: string, version: number, engineId: string) {
  const cs = await tx.select({ id: checks.id }).from(checks).where(eq(checks.engineId, engineId));
  await tx
    .insert(tombstones)
    .values([
      { entity: "engine", entityId: engineId, ownerId, version },
      ...cs.map((c) => ({ entity: "check", entityId: c.id, ownerId, version })),
    ]);
  await tx.delete(engines).where(and(eq(engines.id, engineId), eq(engines.ownerId, ownerId)));
}

export const checkToApi = (c: CheckRow) => pick(c, [...CHECK_PLAIN_FIELDS, "startedAt", "closedAt", "version"]);

export async function listChecks(engineId: string, limit: number, offset: number) {
  const where = eq(checks.engineId, engineId);
  return (await listPage(checks, where, [desc(checks.startedAt), desc(checks.id)], limit, offset)).map(checkToApi);
}

export const getCheckRow = (ex: Executor, checkId: string) => rowById(ex, checks, checkId);

/** A check and its engine in one round trip (the engine null only if the key between them were broken). */
export async function getCheckAndEngine(ex: Executor, checkId: string) {
  const [r] = await ex
    .select({ check: checks, engine: engines })
    .from(checks)
    .leftJoin(engines, eq(engines.id, checks.engineId))
    .where(eq(checks.id, checkId))
    .limit(1);
  return r;
}

type CheckFields = {
  odometer: number;
  measuredHot: boolean;
  notes?: string | null;
  status: CheckRow["status"];
  startedAt?: string;
};

/**
 * Create or replace a check; closedAt is set when it first closes and cleared when it opens again.
 * A check recorded after the fact (an import) names the day it was made, and was closed that day.
 */
export async function putCheck(
  tx: Tx,
  ownerId: string,
  version: number,
  id: string,
  engineId: string,
  a: CheckFields,
  existing?: CheckRow,
) {
  const startedAt = a.startedAt ? new Date(a.startedAt) : undefined;
  const closedAt = a.status === "closed" ? (existing?.closedAt ?? startedAt ?? new Date()) : null;
  const set = {
    odometer: a.odometer,
    measuredHot: a.measuredHot,
    notes: a.notes ?? null,
    status: a.status,
    closedAt,
    ...(startedAt ? { startedAt } : {}),
    version,
  };
  await tx
    .insert(checks)
    .values({ id, engineId, ownerId, ...set })
    .onDuplicateKeyUpdate({ set });
}

export async function removeCheck(tx: Tx, ownerId: string, version: number, checkId: string) {
  await tx.insert(tombstones).values({ entity: "check", entityId: checkId, ownerId, version });
  await tx.delete(checks).where(and(eq(checks.id, checkId), eq(checks.ownerId, ownerId)));
}

export const readingToApi = (r: ReadingRow) =>
  pick(r, ["id", "checkId", "valve", "round", ...READING_VALUE_FIELDS, "fittedAt", "version", "updatedAt"]);

export async function listReadings(ex: Executor, checkId: string) {
  const rows = await ex
    .select()
    .from(readings)
    .where(eq(readings.checkId, checkId))
    .orderBy(asc(readings.valve), asc(readings.round));
  return rows.map(readingToApi);
}

const READING_FIELDS = READING_VALUE_FIELDS;

/** The readings upsert's columns (every one a row carries) and its statement, made once. */
const READING_COLUMNS = getTableColumns(readings);
const UPSERT_COLUMNS = (
  ["id", "checkId", "ownerId", "valve", "round", ...READING_FIELDS, "fittedAt", "version"] as const
).map((k) => [k, READING_COLUMNS[k]] as const);
const UPSERT_SQL = `INSERT INTO \`readings\` (${UPSERT_COLUMNS.map(([, c]) => `\`${c.name}\``).join(", ")}) VALUES ? ON DUPLICATE KEY UPDATE ${(
  [...READING_FIELDS, "fittedAt", "version"] as const
)
  .map((k) => READING_COLUMNS[k].name)
  .map((n) => `\`${n}\` = VALUES(\`${n}\`)`)
  .join(", ")}`;

/**
 * Write readings of one check as one multi-row upsert (MariaDB takes runs of rows ~10x faster
 * than a statement per row). The last write of a valve and round wins; the values it replaces go
 * to reading_history. The caller has checked access; both the REST route and sync use this.
 */
export async function writeReadings(tx: Tx, ownerId: string, version: number, checkId: string, rs: ReadingInput[]) {
  const byKey = new Map<string, ReadingInput>();
  for (const r of rs) byKey.set(`${r.valve}#${r.round}`, r);
  const input = [...byKey.values()];
  // only the rows these writes replace: (valve, round) pairs, not every round of those valves
  // (escaped by mysql2 as its own query() does; drizzle's builder took a few ms for 200 pairs)
  const pairs = sql.raw(
    format(
      input.map(() => "(?, ?)").join(", "),
      input.flatMap((r) => [r.valve, r.round]),
    ),
  );
  // a locking read: the row as last committed, not this transaction's snapshot, so a write that
  // raced this one lands in the history instead of being overwritten unseen
  const existing = await tx
    .select()
    .from(readings)
    .where(and(eq(readings.checkId, checkId), sql`(${readings.valve}, ${readings.round}) IN (${pairs})`))
    .for("update");
  const old = new Map(existing.map((r) => [`${r.valve}#${r.round}`, r]));
  phase("readings lock read");
  const history = input.flatMap((r) => {
    const o = old.get(`${r.valve}#${r.round}`);
    return o ? [{ readingId: o.id, previous: Object.fromEntries(READING_FIELDS.map((f) => [f, o[f]])) }] : [];
  });
  if (history.length) await tx.insert(readingHistory).values(history);
  phase("history copy");
  const rows = input.map((r): typeof readings.$inferInsert => ({
    id: old.get(`${r.valve}#${r.round}`)?.id ?? crypto.randomUUID(),
    checkId,
    ownerId,
    valve: r.valve,
    round: r.round,
    ...readingValues(r),
    measured: r.measured ?? r.feelerGo ?? null,
    fittedAt: r.fittedShim != null ? new Date() : null,
    version,
  }));
  // One multi-row upsert, its text made by mysql2's escaping (what its query() does with values):
  // drizzle's builder spent 4 ms of a 200-reading push on this one statement. Each value goes
  // through its column's own mapping first, so what is stored is what drizzle would store.
  const values = rows.map((row) =>
    UPSERT_COLUMNS.map(([key, col]) => (row[key] == null ? null : col.mapToDriverValue(row[key]))),
  );
  await tx.execute(sql.raw(format(UPSERT_SQL, [values as (string | number | null)[][]])));
  phase("readings upsert");
  // a reading changes its check too, so other devices see the check move on
  await tx.update(checks).set({ version }).where(eq(checks.id, checkId));
  phase("check version");
}

export const trayToApi = (t: TrayItemRow) =>
  pick(t, ["id", "size", "measuredSize", "count", "shimDiameter", "version"]);

export async function listTray(ownerId: string, limit: number, offset: number) {
  const where = eq(trayItems.ownerId, ownerId);
  return (await listPage(trayItems, where, [asc(trayItems.size), asc(trayItems.id)], limit, offset)).map(trayToApi);
}

export const getTrayRow = (ex: Executor, id: string) => rowById(ex, trayItems, id);

type TrayFields = { size: number; measuredSize: boolean; count: number; shimDiameter?: number | null };

export async function putTrayItem(tx: Tx, ownerId: string, version: number, id: string, a: TrayFields) {
  const set = {
    size: a.size,
    measuredSize: a.measuredSize,
    count: a.count,
    shimDiameter: a.shimDiameter ?? null,
    version,
  };
  await tx
    .insert(trayItems)
    .values({ id, ownerId, ...set })
    .onDuplicateKeyUpdate({ set });
}

export async function removeTrayItem(tx: Tx, ownerId: string, version: number, id: string) {
  await tx.insert(tombstones).values({ entity: "tray_item", entityId: id, ownerId, version });
  await tx.delete(trayItems).where(and(eq(trayItems.id, id), eq(trayItems.ownerId, ownerId)));
}
