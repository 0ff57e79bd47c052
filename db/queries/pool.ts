import "server-only";
import { and, asc, desc, eq, gt, inArray, isNull, or, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { toNm } from "@/lib/lash";
import {
  HOLDING,
  MOVES,
  type ApiBorrow,
  type ApiOffer,
  type BorrowInput,
  type BorrowMove,
  type OfferInput,
} from "@/lib/pool/rules";
import { notFound, refused, DomainError } from "@/lib/errors";
import { db, type Executor, type Tx } from "../client";
import { borrowRequests, checks, poolOffers, trayItems, users } from "../schema";
import { nextVersion } from "../versions";

/**
 * The club pool's rows. Every write takes the caller's transaction and change version (the REST
 * routes and sync pushes share these), and locks the offer row before counting what is left, so
 * two requests racing for the last shim cannot both get it.
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
async function trayCount(tx: Tx, userId: string, size: number) {
  const rows = await tx
    .select({ size: trayItems.size, count: trayItems.count })
    .from(trayItems)
    .where(eq(trayItems.ownerId, userId));
  return rows.filter((r) => toNm(r.size) === toNm(size)).reduce((n, r) => n + r.count, 0);
}

/** Add (or take, with a negative delta, never below zero) shims of one size on a user's tray. */
async function adjustTray(
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

export async function putOffer(tx: Tx, version: number, ownerId: string, a: OfferInput & { id: string }) {
  const [existing] = await tx.select().from(poolOffers).where(eq(poolOffers.id, a.id)).limit(1).for("update");
  if (existing && existing.ownerId !== ownerId) throw notFound("offer");
  if (existing) return existing; // the same offer sent again
  const have = await trayCount(tx, ownerId, a.size);
  if (have < a.count) throw refused(`your tray holds ${have} of ${a.size} mm: offer at most that many`);
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

/** The owner takes an offer back; open requests on it are declined. */
export async function withdrawOffer(tx: Tx, version: number, ownerId: string, id: string) {
  const [o] = await tx.select().from(poolOffers).where(eq(poolOffers.id, id)).limit(1).for("update");
  if (!o || o.ownerId !== ownerId) throw notFound("offer");
  if (o.withdrawnAt) return [];
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

/** A request for shims of an offer; refused when fewer are left than asked for. */
export async function askBorrow(
  tx: Tx,
  version: number,
  borrowerId: string,
  a: BorrowInput & { id: string },
  isMember: (clubId: string) => Promise<boolean>,
) {
  const [dup] = await tx
    .select({ borrowerId: borrowRequests.borrowerId })
    .from(borrowRequests)
    .where(eq(borrowRequests.id, a.id))
    .limit(1);
  if (dup) {
    if (dup.borrowerId !== borrowerId) throw notFound("request");
    return null; // the same request sent again
  }
  if (a.checkId) {
    // the lender is shown which check asks: it must be the asker's own, never someone else's
    const [c] = await tx.select({ ownerId: checks.ownerId }).from(checks).where(eq(checks.id, a.checkId)).limit(1);
    if (!c || c.ownerId !== borrowerId) throw notFound("check");
  }
  const [o] = await tx.select().from(poolOffers).where(eq(poolOffers.id, a.offerId)).limit(1).for("update");
  if (!o || o.withdrawnAt || !(await isMember(o.clubId)))
    throw new DomainError("not_found", "That offer is no longer there");
  if (o.ownerId === borrowerId) throw refused("these are your own shims: they are on your tray");
  // the row lock above orders requests on one node only; this write to the offer row is what a
  // multi-primary cluster certifies, so of two requests on two nodes one commits, the other retries
  await tx
    .update(poolOffers)
    .set({ asks: sql`${poolOffers.asks} + 1` })
    .where(eq(poolOffers.id, o.id));
  const left = o.count - ((await held(tx, [o.id], true)).get(o.id) ?? 0);
  if (left < a.count)
    throw refused(
      left > 0
        ? `only ${left} of ${o.size} mm left on offer`
        : `none of ${o.size} mm left on offer: another member asked first`,
    );
  await tx.insert(borrowRequests).values({
    id: a.id,
    offerId: o.id,
    borrowerId,
    lenderId: o.ownerId,
    checkId: a.checkId ?? null,
    size: o.size,
    count: a.count,
    version,
  });
  return o;
}

/** One step of a loan, by the side allowed to take it, with its effect on the trays. */
export async function moveBorrow(
  tx: Tx,
  version: number,
  userId: string,
  id: string,
  move: BorrowMove,
  returnSize: number | null,
) {
  const [r] = await tx.select().from(borrowRequests).where(eq(borrowRequests.id, id)).limit(1).for("update");
  if (!r || (r.borrowerId !== userId && r.lenderId !== userId)) throw notFound("request");
  const m = MOVES[move];
  const side = r.lenderId === userId ? "lender" : "borrower";
  if (m.by !== side) throw refused(`only the ${m.by} can do that`);
  if (!(m.from as readonly string[]).includes(r.state)) {
    if (r.state === m.to) return null; // the same step sent twice
    throw refused(`the request is ${r.state}: it cannot be ${m.to} now`);
  }
  const [o] = await tx.select().from(poolOffers).where(eq(poolOffers.id, r.offerId)).limit(1).for("update");
  const diameter = o?.shimDiameter ?? null;
  if (move === "hand-over") {
    if (o)
      await tx
        .update(poolOffers)
        .set({ count: Math.max(0, o.count - r.count), version })
        .where(eq(poolOffers.id, o.id));
    await adjustTray(tx, version, r.lenderId, r.size, -r.count, diameter);
    // the borrower's tray is synced to the borrower: their next change version
    await adjustTray(tx, await nextVersion(tx, r.borrowerId), r.borrowerId, r.size, r.count, diameter);
  }
  const back = returnSize ?? r.size;
  if (move === "give-back") await adjustTray(tx, version, r.borrowerId, back, -r.count, diameter);
  if (move === "settle") await adjustTray(tx, version, r.lenderId, r.returnSize ?? r.size, r.count, diameter);
  await tx
    .update(borrowRequests)
    .set({ state: m.to, version, ...(move === "give-back" ? { returnSize: back } : {}) })
    .where(eq(borrowRequests.id, id));
  // the offer's note says where to collect the shims: the agreed notice carries it
  return { ...r, state: m.to, side, note: o?.note ?? null };
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
