import "server-only";
import { eq, sql } from "drizzle-orm";
import type { Executor, Tx } from "../connection";
import { checks, comments, engines, readings, trayItems, uploads } from "../schema";

/**
 * The account import's writes: runs of rows as multi-row inserts (a multi-row insert is many times the
 * speed of a statement per row: npm run bench prints both), inside the one transaction the caller holds.
 */
const RUN = 500;

async function inRuns<T>(rows: T[], insert: (run: T[]) => Promise<unknown>) {
  for (let i = 0; i < rows.length; i += RUN) await insert(rows.slice(i, i + RUN));
}

/** What the account holds that an import would mix with: engines (and so checks) and tray items. Locking: decided on in the import's transaction. */
export async function accountRecordCounts(ex: Executor, ownerId: string, lock = false) {
  const e = ex
    .select({ n: sql<number>`count(*)` })
    .from(engines)
    .where(eq(engines.ownerId, ownerId));
  const t = ex
    .select({ n: sql<number>`count(*)` })
    .from(trayItems)
    .where(eq(trayItems.ownerId, ownerId));
  // one after the other: a transaction has one connection
  const [er] = lock ? await e.for("update") : await e;
  const [tr] = lock ? await t.for("update") : await t;
  return { engines: Number(er?.n ?? 0), tray: Number(tr?.n ?? 0) };
}

export const insertChecks = (tx: Tx, rows: (typeof checks.$inferInsert)[]) =>
  inRuns(rows, (run) => tx.insert(checks).values(run));
export const insertReadings = (tx: Tx, rows: (typeof readings.$inferInsert)[]) =>
  inRuns(rows, (run) => tx.insert(readings).values(run));
export const insertComments = (tx: Tx, rows: (typeof comments.$inferInsert)[]) =>
  inRuns(rows, (run) => tx.insert(comments).values(run));
export const insertUploads = (tx: Tx, rows: (typeof uploads.$inferInsert)[]) =>
  inRuns(rows, (run) => tx.insert(uploads).values(run));
export const insertTray = (tx: Tx, rows: (typeof trayItems.$inferInsert)[]) =>
  inRuns(rows, (run) => tx.insert(trayItems).values(run));
