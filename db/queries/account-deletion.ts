import "server-only";
import { and, eq, inArray, isNull, lte, ne, or, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import type { DeletionBlocker } from "@/lib/account/deletion";
import { STATE_WORDS, type BorrowState } from "@/lib/pool/rules";
import { db, type Executor, type Tx } from "../connection";
import {
  authTokens,
  borrowRequests,
  checks,
  clubLog,
  clubs,
  comments,
  engines,
  invites,
  memberships,
  notices,
  objectDeletions,
  ownerVersions,
  poolOffers,
  rateLimits,
  readings,
  shares,
  syncClients,
  tombstones,
  trayItems,
  uploads,
  users,
} from "../schema";
import { hashToken } from "./users";
import { nextVersion } from "../versions";

/**
 * The rows of an account's deletion (server/account-deletion.ts decides; these read and write).
 * Every function takes the executor: the deletion itself runs in one transaction.
 */

/** Loans with shims in someone's hands: a deletion waits until they are back and settled. */
export const LOAN_OPEN: readonly BorrowState[] = ["handed-over", "giving-back"];

/** A text matched as itself by LIKE ("_" in an address is not a wildcard). */
const likeText = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

const count = async (ex: Executor, q: Promise<{ n: number | string }[]>) => Number((await q)[0]?.n ?? 0);
const n = sql<number>`count(*)`;

/** What a deletion would remove, counted: the confirmation screen shows these. */
export async function accountCounts(ex: Executor, userId: string) {
  const mine = eq(checks.ownerId, userId);
  return {
    engines: await count(ex, ex.select({ n }).from(engines).where(eq(engines.ownerId, userId))),
    checks: await count(ex, ex.select({ n }).from(checks).where(mine)),
    readings: await count(ex, ex.select({ n }).from(readings).where(eq(readings.ownerId, userId))),
    photos: await count(
      ex,
      ex
        .select({ n })
        .from(uploads)
        .leftJoin(checks, eq(checks.id, uploads.checkId))
        .where(or(eq(uploads.ownerId, userId), mine)),
    ),
    trayItems: await count(ex, ex.select({ n }).from(trayItems).where(eq(trayItems.ownerId, userId))),
    shares: await count(
      ex,
      ex
        .select({ n })
        .from(shares)
        .innerJoin(checks, eq(checks.id, shares.checkId))
        .where(and(mine, isNull(shares.withdrawnAt))),
    ),
    commentsKept: await count(
      ex,
      ex
        .select({ n })
        .from(comments)
        .innerJoin(checks, eq(checks.id, comments.checkId))
        .where(and(eq(comments.authorId, userId), ne(checks.ownerId, userId))),
    ),
  };
}

/**
 * The clubs the account is in, with its admin role, the club's admins and members. Inside the
 * deletion (`locking`), each club the account administers is written first and its admins read
 * with a lock (lockClubRoles in db/queries/clubs.ts does the same for every role change), so a
 * co-admin stepping down at the same moment cannot leave the club without one.
 */
export async function clubsOf(ex: Executor, userId: string) {
  const rows = await ex
    .select({ id: clubs.id, name: clubs.name, role: memberships.role })
    .from(memberships)
    .innerJoin(clubs, eq(clubs.id, memberships.clubId))
    .where(eq(memberships.userId, userId));
  const byClub = new Map<string, { id: string; name: string; admin: boolean }>();
  for (const r of rows) {
    const c = byClub.get(r.id) ?? { id: r.id, name: r.name, admin: false };
    c.admin ||= r.role === "admin";
    byClub.set(r.id, c);
  }
  return [...byClub.values()].sort((a, b) => a.name.localeCompare(b.name));
}

export async function clubHeadcount(ex: Executor, clubId: string, locking: boolean) {
  if (locking)
    await ex
      .update(clubs)
      .set({ roleChanges: sql`${clubs.roleChanges} + 1` })
      .where(eq(clubs.id, clubId));
  const q = ex
    .select({ userId: memberships.userId, role: memberships.role })
    .from(memberships)
    .where(eq(memberships.clubId, clubId));
  const rows = locking ? await q.for("update") : await q;
  return { admins: rows.filter((r) => r.role === "admin").length, members: new Set(rows.map((r) => r.userId)).size };
}

/** Loans of the account with shims out, with the other side's name (locked inside the deletion). */
export async function openLoans(ex: Executor, userId: string, locking: boolean): Promise<DeletionBlocker[]> {
  const borrower = alias(users, "borrower");
  const lender = alias(users, "lender");
  const q = ex
    .select({
      id: borrowRequests.id,
      lenderId: borrowRequests.lenderId,
      borrowerName: borrower.name,
      lenderName: lender.name,
      count: borrowRequests.count,
      size: borrowRequests.size,
      state: borrowRequests.state,
    })
    .from(borrowRequests)
    .innerJoin(borrower, eq(borrower.id, borrowRequests.borrowerId))
    .innerJoin(lender, eq(lender.id, borrowRequests.lenderId))
    .where(
      and(
        or(eq(borrowRequests.borrowerId, userId), eq(borrowRequests.lenderId, userId)),
        inArray(borrowRequests.state, [...LOAN_OPEN]),
      ),
    );
  const rows = locking ? await q.for("update") : await q;
  return rows.map((r) => {
    const side = r.lenderId === userId ? ("lender" as const) : ("borrower" as const);
    return {
      kind: "open-loan" as const,
      loanId: r.id,
      otherName: side === "lender" ? r.borrowerName : r.lenderName,
      side,
      count: r.count,
      size: r.size,
      state: STATE_WORDS[r.state],
    };
  });
}

/** Uses a mailed deletion link once, in the deletion's transaction; false when it is not this account's usable link. */
export async function consumeDeleteToken(tx: Tx, raw: string, userId: string): Promise<boolean> {
  const [r] = await tx
    .update(authTokens)
    .set({ usedAt: new Date() })
    .where(
      and(
        eq(authTokens.tokenHash, hashToken(raw)),
        eq(authTokens.purpose, "delete"),
        eq(authTokens.userId, userId),
        isNull(authTokens.usedAt),
        sql`${authTokens.expiresAt} > NOW(3)`,
      ),
    );
  return r.affectedRows === 1;
}

/**
 * The comments the account wrote on other members' checks lose their author: the words stay in
 * the thread, the person is gone. Each check's owner gets a new change version for them, so the
 * owner's phones pull the comment again without the id.
 */
export async function anonymiseComments(tx: Tx, userId: string): Promise<number> {
  const rows = await tx
    .select({ id: comments.id, ownerId: checks.ownerId })
    .from(comments)
    .innerJoin(checks, eq(checks.id, comments.checkId))
    .where(and(eq(comments.authorId, userId), ne(checks.ownerId, userId)))
    .for("update");
  const byOwner = new Map<string, string[]>();
  for (const r of rows) byOwner.set(r.ownerId, [...(byOwner.get(r.ownerId) ?? []), r.id]);
  for (const [ownerId, ids] of byOwner)
    await tx
      .update(comments)
      .set({ authorId: null, version: await nextVersion(tx, ownerId) })
      .where(inArray(comments.id, ids));
  return rows.length;
}

/** The object keys of every photo that goes: the account's own, and any photo on its checks. */
export async function queueObjectDeletions(tx: Tx, userId: string): Promise<number> {
  const rows = await tx
    .select({ key: uploads.objectKey })
    .from(uploads)
    .leftJoin(checks, eq(checks.id, uploads.checkId))
    .where(or(eq(uploads.ownerId, userId), eq(checks.ownerId, userId)));
  for (let i = 0; i < rows.length; i += 500)
    await tx
      .insert(objectDeletions)
      .values(rows.slice(i, i + 500).map((r) => ({ objectKey: r.key })))
      .onDuplicateKeyUpdate({ set: { objectKey: sql`object_key` } });
  return rows.length;
}

/**
 * Every row that is the account's, or names it, goes or loses the name; run after the memberships
 * ended (which withdrew shares, offers and open requests and logged it in each club).
 */
export async function eraseRows(tx: Tx, userId: string, email: string): Promise<void> {
  const myChecks = tx.select({ id: checks.id }).from(checks).where(eq(checks.ownerId, userId));
  await tx.delete(uploads).where(or(eq(uploads.ownerId, userId), inArray(uploads.checkId, myChecks)));
  // mail to the address stops now: whatever waits for it (notices, links asked for) is dropped
  await tx.delete(notices).where(or(eq(notices.toUserId, userId), eq(notices.toEmail, email)));
  await tx.delete(borrowRequests).where(or(eq(borrowRequests.borrowerId, userId), eq(borrowRequests.lenderId, userId)));
  await tx.delete(poolOffers).where(eq(poolOffers.ownerId, userId));
  // comments others wrote on the account's checks go with the checks; readings, history and shares too
  await tx.delete(comments).where(inArray(comments.checkId, myChecks));
  await tx.delete(readings).where(eq(readings.ownerId, userId));
  await tx.delete(checks).where(eq(checks.ownerId, userId));
  await tx.delete(engines).where(eq(engines.ownerId, userId));
  await tx.delete(trayItems).where(eq(trayItems.ownerId, userId));
  await tx.delete(tombstones).where(eq(tombstones.ownerId, userId));
  await tx.delete(syncClients).where(eq(syncClients.userId, userId));
  await tx.delete(authTokens).where(eq(authTokens.userId, userId));
  // invitations to the address are about this person; those the account sent stay the club's, unsigned
  await tx.delete(invites).where(eq(invites.email, email));
  await tx.update(invites).set({ invitedBy: null }).where(eq(invites.invitedBy, userId));
  await tx.update(clubLog).set({ actorId: null }).where(eq(clubLog.actorId, userId));
  await tx.update(clubLog).set({ subjectUserId: null }).where(eq(clubLog.subjectUserId, userId));
  await tx.update(clubLog).set({ subjectEmail: null }).where(eq(clubLog.subjectEmail, email));
  await tx.update(shares).set({ verdictBy: null }).where(eq(shares.verdictBy, userId));
  await tx.update(clubs).set({ createdBy: null }).where(eq(clubs.createdBy, userId));
  await tx.delete(ownerVersions).where(eq(ownerVersions.ownerId, userId));
  // the account's budgets (keys "name:<id>" or "name:<address>"): a count must not outlive whom it counts;
  // found by a plain read (a locking LIKE scan would hold every budget row until the commit), then deleted by key
  // (a key names it whole, at its end or before another part: "push:device:<id>:<device>")
  const named = (v: string) => sql`(\`key\` LIKE ${`%:${likeText(v)}`} OR \`key\` LIKE ${`%:${likeText(v)}:%`})`;
  const [found] = (await tx.execute(
    sql`SELECT \`key\` AS k FROM rate_limits WHERE ${named(userId)} OR ${named(email)}`,
  )) as unknown as [{ k: string }[]];
  if (found.length)
    await tx.delete(rateLimits).where(
      inArray(
        rateLimits.key,
        found.map((r) => r.k),
      ),
    );
  await tx.delete(users).where(eq(users.id, userId));
}

export async function deleteClub(tx: Tx, clubId: string): Promise<void> {
  await tx.delete(clubs).where(eq(clubs.id, clubId));
}

// ---- the object store's sweep ------------------------------------------------------------------

/** Keys due for another try, the longest waiting first. */
export async function dueObjectDeletions(limit: number): Promise<string[]> {
  const rows = await db()
    .select({ k: objectDeletions.objectKey })
    .from(objectDeletions)
    .where(lte(objectDeletions.nextAttemptAt, sql`NOW(3)`))
    .orderBy(objectDeletions.nextAttemptAt)
    .limit(limit);
  return rows.map((r) => r.k);
}

export async function objectDeleted(key: string): Promise<void> {
  await db().delete(objectDeletions).where(eq(objectDeletions.objectKey, key));
}

/** The store refused or could not be reached: try again after a wait that doubles, up to an hour. */
export async function objectDeleteFailed(key: string, error: string, baseSeconds: number): Promise<void> {
  await db()
    .update(objectDeletions)
    .set({
      attempts: sql`${objectDeletions.attempts} + 1`,
      lastError: error.slice(0, 500),
      nextAttemptAt: sql`NOW(3) + INTERVAL LEAST(${baseSeconds} * POW(2, LEAST(${objectDeletions.attempts}, 12)), 3600) SECOND`,
    })
    .where(eq(objectDeletions.objectKey, key));
}
