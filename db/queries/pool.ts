import "server-only";
import { and, asc, desc, eq, gt, inArray, isNull, or, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { toNm } from "@/lib/lash";
import { HOLDING, type ApiBorrow, type ApiOffer, type OfferInput } from "@/lib/pool/rules";
import { db, type Executor, type Tx } from "../connection";
import { borrowRequests, poolOffers, trayItems, users } from "../schema";

/**
 * The club pool's rows, SQL only (the rules are server/pool.ts's and server/access.ts's). Every
 * write takes the caller's transaction and change version (the REST routes and sync pushes share
 * these); the offer row is locked before what is left is counted, so two requests racing for the
 * last shim cannot both get it.
 */

/**
 * Open requests' holds on each offer. Inside a write it is a locking read: a plain read would see
 * the transaction's snapshot, taken before a racing request committed, and count too few holds.
 */
async function held(tx: Executor, offerIds: string[], locking = false) {
  if (offerIds.length === 0) return new Map<string, number>();
  const q = tx
    .select({ offerId: borrowRequests.offerId, count: borrowRequests.count })
    .from(borrowRequests)
    .where(and(inArray(borrowRequests.offerId, offerIds), inArray(borrowRequests.state, [...HOLDING])));
  const rows = locking ? await q.for("update") : await q;
  const m = new Map<string, number>();
  for (const r of rows) m.set(r.offerId, (m.get(r.offerId) ?? 0) + r.count);
  return m;
}

export async function listOffers(clubId: string): Promise<ApiOffer[]> {
  const rows = await db()
    .select({ o: poolOffers, ownerName: users.name })
    .from(poolOffers)
    .innerJoin(users, eq(users.id, poolOffers.ownerId))
    .where(and(eq(poolOffers.clubId, clubId), isNull(poolOffers.withdrawnAt), gt(poolOffers.count, 0)))
    .orderBy(asc(poolOffers.size), asc(users.name));
  const h = await held(
    db(),
    rows.map((r) => r.o.id),
  );
  return rows.map(({ o, ownerName }) => ({
    id: o.id,
    clubId: o.clubId,
    ownerId: o.ownerId,
    ownerName,
    size: o.size,
    measuredSize: o.measuredSize,
    count: o.count,
    available: Math.max(0, o.count - (h.get(o.id) ?? 0)),
    shimDiameter: o.shimDiameter,
    note: o.note,
  }));
}

export async function getOffer(ex: Executor, id: string) {
  const [o] = await ex.select().from(poolOffers).where(eq(poolOffers.id, id)).limit(1);
  return o;
}

/** How many shims of this size the user has on their tray. */
export async function trayCount(tx: Tx, userId: string, size: number) {
  const rows = await tx
    .select({ size: trayItems.size, count: trayItems.count })
    .from(trayItems)
    .where(eq(trayItems.ownerId, userId));
  return rows.filter((r) => toNm(r.size) === toNm(size)).reduce((n, r) => n + r.count, 0);
}

/** Add (or take, with a negative delta, never below zero) shims of one size on a user's tray. */
export async function adjustTray(
  tx: Tx,
  version: number,
  userId: string,
  size: number,
  delta: number,
  shimDiameter: number | null,
) {
  const rows = await tx.select().from(trayItems).where(eq(trayItems.ownerId, userId)).for("update");
  const same = rows.filter((r) => toNm(r.size) === toNm(size));
  if (delta > 0) {
    const item = same[0];
    if (item)
      await tx
        .update(trayItems)
        .set({ count: item.count + delta, version })
        .where(eq(trayItems.id, item.id));
    else
      await tx
        .insert(trayItems)
        .values({ id: crypto.randomUUID(), ownerId: userId, size, count: delta, shimDiameter, version });
    return;
  }
  let take = -delta;
  for (const item of same) {
    if (take === 0) break;
    const n = Math.min(item.count, take);
    if (n > 0)
      await tx
        .update(trayItems)
        .set({ count: item.count - n, version })
        .where(eq(trayItems.id, item.id));
    take -= n;
  }
}

/** The offer row, locked until the write ends: what is left of it is decided on it. */
export async function lockOffer(tx: Tx, id: string) {
  const [o] = await tx.select().from(poolOffers).where(eq(poolOffers.id, id)).limit(1).for("update");
  return o;
}

export async function insertOffer(tx: Tx, version: number, ownerId: string, a: OfferInput & { id: string }) {
  await tx.insert(poolOffers).values({
    id: a.id,
    clubId: a.clubId,
    ownerId,
    size: a.size,
    measuredSize: a.measuredSize,
    count: a.count,
    shimDiameter: a.shimDiameter ?? null,
    note: a.note ?? null,
    version,
  });
}

/** The offer taken back; its open requests are declined and answered (their borrowers are told). */
export async function withdrawOffer(tx: Tx, version: number, id: string) {
  await tx.update(poolOffers).set({ withdrawnAt: new Date(), version }).where(eq(poolOffers.id, id));
  const open = await tx
    .select({ id: borrowRequests.id, borrowerId: borrowRequests.borrowerId })
    .from(borrowRequests)
    .where(and(eq(borrowRequests.offerId, id), inArray(borrowRequests.state, [...HOLDING])));
  if (open.length)
    await tx
      .update(borrowRequests)
      .set({ state: "declined", version })
      .where(
        inArray(
          borrowRequests.id,
          open.map((r) => r.id),
        ),
      );
  return open;
}

export async function getBorrow(tx: Tx, id: string) {
  const [r] = await tx.select().from(borrowRequests).where(eq(borrowRequests.id, id)).limit(1);
  return r;
}

/** The request row, locked until the write ends (one step of a loan at a time). */
export async function lockBorrow(tx: Tx, id: string) {
  const [r] = await tx.select().from(borrowRequests).where(eq(borrowRequests.id, id)).limit(1).for("update");
  return r;
}

/**
 * The shims of an offer not yet held by open requests. The row lock lockOffer takes orders requests
 * on one node only; this write to the offer row is what a multi-primary cluster certifies, so of two
 * requests on two nodes one commits, the other retries. The holds are counted with a locking read.
 */
export async function claimLeft(tx: Tx, o: { id: string; count: number }): Promise<number> {
  await tx
    .update(poolOffers)
    .set({ asks: sql`${poolOffers.asks} + 1` })
    .where(eq(poolOffers.id, o.id));
  return o.count - ((await held(tx, [o.id], true)).get(o.id) ?? 0);
}

export async function insertBorrow(tx: Tx, r: typeof borrowRequests.$inferInsert) {
  await tx.insert(borrowRequests).values(r);
}

export async function setOfferCount(tx: Tx, version: number, id: string, count: number) {
  await tx.update(poolOffers).set({ count, version }).where(eq(poolOffers.id, id));
}

export async function setBorrowState(
  tx: Tx,
  version: number,
  id: string,
  state: (typeof borrowRequests.$inferSelect)["state"],
  returnSize?: number,
) {
  await tx
    .update(borrowRequests)
    .set({ state, version, ...(returnSize !== undefined ? { returnSize } : {}) })
    .where(eq(borrowRequests.id, id));
}

export async function listBorrows(userId: string): Promise<ApiBorrow[]> {
  const borrower = alias(users, "borrower");
  const lender = alias(users, "lender");
  const rows = await db()
    .select({ r: borrowRequests, clubId: poolOffers.clubId, borrowerName: borrower.name, lenderName: lender.name })
    .from(borrowRequests)
    .innerJoin(poolOffers, eq(poolOffers.id, borrowRequests.offerId))
    .innerJoin(borrower, eq(borrower.id, borrowRequests.borrowerId))
    .innerJoin(lender, eq(lender.id, borrowRequests.lenderId))
    .where(or(eq(borrowRequests.borrowerId, userId), eq(borrowRequests.lenderId, userId)))
    .orderBy(desc(borrowRequests.updatedAt))
    .limit(200);
  return rows.map(({ r, clubId, borrowerName, lenderName }) => ({
    id: r.id,
    offerId: r.offerId,
    clubId,
    borrowerId: r.borrowerId,
    borrowerName,
    lenderId: r.lenderId,
    lenderName,
    checkId: r.checkId,
    size: r.size,
    count: r.count,
    state: r.state,
    returnSize: r.returnSize,
    updatedAt: r.updatedAt.toISOString(),
  }));
}
