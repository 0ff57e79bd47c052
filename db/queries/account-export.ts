import "server-only";
import { and, asc, eq, gt, isNotNull, ne, or } from "drizzle-orm";
import { db } from "../connection";
import { borrowRequests, checks, comments, engines, readings, trayItems, uploads, users } from "../schema";

/**
 * The account export's reads: every one scoped by the owner and read in pages by id (keyset), each
 * page its own short query outside any transaction, so a long download holds no connection.
 */
export const EXPORT_PAGE_ROWS = 500;

export async function enginePage(ownerId: string, afterId: string) {
  return db()
    .select()
    .from(engines)
    .where(and(eq(engines.ownerId, ownerId), gt(engines.id, afterId)))
    .orderBy(asc(engines.id))
    .limit(EXPORT_PAGE_ROWS);
}

/** One engine's checks in the order of their start (their metadata only; a check's readings are read on their own). */
export async function checkPage(ownerId: string, engineId: string, afterId: string) {
  return db()
    .select()
    .from(checks)
    .where(and(eq(checks.ownerId, ownerId), eq(checks.engineId, engineId), gt(checks.id, afterId)))
    .orderBy(asc(checks.id))
    .limit(EXPORT_PAGE_ROWS);
}

export async function readingsOfCheck(ownerId: string, checkId: string) {
  return db()
    .select()
    .from(readings)
    .where(and(eq(readings.checkId, checkId), eq(readings.ownerId, ownerId)))
    .orderBy(asc(readings.valve), asc(readings.round));
}

/** Comments on the owner's checks, whoever wrote them, with the author's name. */
export async function commentsOnOwnChecksPage(ownerId: string, afterId: string) {
  return db()
    .select({ c: comments, authorName: users.name })
    .from(comments)
    .innerJoin(checks, eq(checks.id, comments.checkId))
    .innerJoin(users, eq(users.id, comments.authorId))
    .where(and(eq(checks.ownerId, ownerId), gt(comments.id, afterId)))
    .orderBy(asc(comments.id))
    .limit(EXPORT_PAGE_ROWS);
}

/** The owner's comments on other people's checks (a mentor's advice): kept as a record. */
export async function ownCommentsElsewherePage(ownerId: string, afterId: string) {
  return db()
    .select({ c: comments })
    .from(comments)
    .innerJoin(checks, eq(checks.id, comments.checkId))
    .where(and(eq(comments.authorId, ownerId), ne(checks.ownerId, ownerId), gt(comments.id, afterId)))
    .orderBy(asc(comments.id))
    .limit(EXPORT_PAGE_ROWS);
}

/** Photos on the owner's checks whose bytes are stored (an upload in flight has none yet). */
export async function photoPage(ownerId: string, afterId: string) {
  return db()
    .select({ p: uploads })
    .from(uploads)
    .innerJoin(checks, eq(checks.id, uploads.checkId))
    .where(and(eq(checks.ownerId, ownerId), isNotNull(uploads.storedAt), gt(uploads.id, afterId)))
    .orderBy(asc(uploads.id))
    .limit(EXPORT_PAGE_ROWS);
}

export async function trayPage(ownerId: string, afterId: string) {
  return db()
    .select()
    .from(trayItems)
    .where(and(eq(trayItems.ownerId, ownerId), gt(trayItems.id, afterId)))
    .orderBy(asc(trayItems.id))
    .limit(EXPORT_PAGE_ROWS);
}

export async function loanPage(userId: string, afterId: string) {
  return db()
    .select()
    .from(borrowRequests)
    .where(
      and(
        or(eq(borrowRequests.borrowerId, userId), eq(borrowRequests.lenderId, userId)),
        gt(borrowRequests.id, afterId),
      ),
    )
    .orderBy(asc(borrowRequests.id))
    .limit(EXPORT_PAGE_ROWS);
}

/** All pages of a keyset query, one page in memory at a time. */
export async function* pages<T>(read: (afterId: string) => Promise<T[]>, idOf: (row: T) => string): AsyncGenerator<T> {
  let after = "";
  for (;;) {
    const rows = await read(after);
    for (const r of rows) yield r;
    if (rows.length < EXPORT_PAGE_ROWS) return;
    after = idOf(rows.at(-1)!);
  }
}
