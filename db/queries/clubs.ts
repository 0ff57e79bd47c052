import "server-only";
import { and, asc, desc, eq, gt, inArray, isNull, or, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { createHash, randomBytes } from "node:crypto";
import { db, type Executor, type Tx } from "../connection";
import {
  borrowRequests,
  checks,
  clubLog,
  clubLogActions,
  clubs,
  comments,
  engines,
  invites,
  memberships,
  poolOffers,
  shares,
  users,
  type Role,
  type ShareRow,
} from "../schema";
import { nextVersion } from "../versions";
import { HOLDING } from "@/lib/pool/rules";
import { FORMER_MEMBER } from "@/lib/account/deletion";

/**
 * A user's roles in a club. `locking` (inside a write) reads the latest commit and holds the rows
 * until the write ends: a removal running at the same moment either waits for it or is seen.
 */
export async function rolesInClub(ex: Executor, userId: string, clubId: string, locking = false): Promise<Role[]> {
  const q = ex
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.userId, userId), eq(memberships.clubId, clubId)));
  const rows = locking ? await q.for("update") : await q;
  return rows.map((r) => r.role);
}

export async function listMyClubs(userId: string) {
  const rows = await db()
    .select({ id: clubs.id, name: clubs.name, role: memberships.role })
    .from(memberships)
    .innerJoin(clubs, eq(clubs.id, memberships.clubId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(clubs.name));
  const byClub = new Map<string, { id: string; name: string; roles: Role[] }>();
  for (const r of rows) {
    const c = byClub.get(r.id) ?? { id: r.id, name: r.name, roles: [] };
    c.roles.push(r.role);
    byClub.set(r.id, c);
  }
  return [...byClub.values()];
}

export async function getClub(ex: Executor, clubId: string) {
  const [c] = await ex
    .select({ id: clubs.id, name: clubs.name, createdAt: clubs.createdAt })
    .from(clubs)
    .where(eq(clubs.id, clubId))
    .limit(1);
  return c;
}

/** A new club's rows, in the caller's transaction: its creator becomes admin (and a mechanic member). */
export async function insertClub(tx: Tx, id: string, name: string, userId: string) {
  await tx.insert(clubs).values({ id, name, createdBy: userId });
  await tx.insert(memberships).values([
    { clubId: id, userId, role: "admin" },
    { clubId: id, userId, role: "mechanic" },
  ]);
  await log(tx, {
    clubId: id,
    actorId: userId,
    action: "roles-changed",
    subjectUserId: userId,
    detail: "none → admin, mechanic",
  });
}

export async function listMembers(ex: Executor, clubId: string) {
  const rows = await ex
    .select({ userId: users.id, name: users.name, email: users.email, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.clubId, clubId))
    .orderBy(asc(users.name));
  const byUser = new Map<string, { userId: string; name: string; email: string; roles: Role[] }>();
  for (const r of rows) {
    const m = byUser.get(r.userId) ?? { userId: r.userId, name: r.name, email: r.email, roles: [] };
    m.roles.push(r.role);
    byUser.set(r.userId, m);
  }
  return [...byUser.values()];
}

/**
 * Before a change of a club's roles, in the caller's transaction: write the club row, so that of
 * two role changes of one club on two nodes of a multi-primary cluster only one commits (the
 * other is retried and sees it), and count the admins with a locking read, which sees the latest
 * commit rather than the transaction's snapshot (two admins stepping down at once on one node).
 */
export async function lockClubRoles(tx: Tx, clubId: string): Promise<{ admins: number }> {
  await tx
    .update(clubs)
    .set({ roleChanges: sql`${clubs.roleChanges} + 1` })
    .where(eq(clubs.id, clubId));
  const rows = await tx
    .select({ id: memberships.id })
    .from(memberships)
    .where(and(eq(memberships.clubId, clubId), eq(memberships.role, "admin")))
    .for("update");
  return { admins: rows.length };
}

type LogEntry = {
  clubId: string;
  actorId: string | null;
  action: (typeof clubLogActions)[number];
  subjectUserId?: string | null;
  subjectEmail?: string | null;
  detail?: string;
};
const log = (tx: Tx, e: LogEntry) => tx.insert(clubLog).values({ ...e, detail: (e.detail ?? "").slice(0, 200) });
const rolesWord = (roles: Role[]) => (roles.length ? [...roles].sort().join(", ") : "none");

/**
 * Replace a member's roles inside the caller's transaction, with a line in the club log. An admin
 * who loses the role loses their pending invitations with it: an invitation speaks for an admin
 * who no longer is.
 */
export async function setRoles(tx: Tx, clubId: string, userId: string, roles: Role[], actorId: string) {
  const before = (
    await tx
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.clubId, clubId), eq(memberships.userId, userId)))
      .for("update")
  ).map((r) => r.role);
  await tx.delete(memberships).where(and(eq(memberships.clubId, clubId), eq(memberships.userId, userId)));
  const after = [...new Set(roles)];
  if (after.length) await tx.insert(memberships).values(after.map((role) => ({ clubId, userId, role })));
  const ended = before.length > 0 && after.length === 0 ? await endMembership(tx, clubId, userId) : "";
  if (rolesWord(before) !== rolesWord(after))
    await log(tx, {
      clubId,
      actorId,
      action: "roles-changed",
      subjectUserId: userId,
      detail: `${rolesWord(before)} → ${rolesWord(after)}${ended}`,
    });
  if (before.includes("admin") && !after.includes("admin")) {
    const [res] = await tx
      .update(invites)
      .set({ withdrawnAt: new Date() })
      .where(
        and(
          eq(invites.clubId, clubId),
          eq(invites.invitedBy, userId),
          isNull(invites.acceptedAt),
          isNull(invites.withdrawnAt),
          gt(invites.expiresAt, new Date()),
        ),
      );
    if (res.affectedRows > 0)
      await log(tx, {
        clubId,
        actorId,
        action: "invites-ended",
        subjectUserId: userId,
        detail: `${res.affectedRows} pending`,
      });
  }
}

/**
 * What a membership held open ends with it, in the removal's (or leaving's) transaction, so that no
 * moment exists when the member is out but their records still reach the club (OWASP ASVS 5.0 V8
 * Authorization: access follows the current relationship):
 * - their checks' shares with the club are withdrawn: its mentors stop reading them at once;
 * - their pool offers in the club are withdrawn;
 * - open requests ("asked" or "agreed": no shim has moved yet) on their offers are declined, and
 *   theirs on other members' offers withdrawn, so no ask reaches them or is held for them.
 * A loan already handed over stays until it is given back and settled: the shims are in someone's
 * hands, and both sides still see it in their own loans (a person's loans are theirs, not the club's).
 * Answers a few words for the club log ("" when nothing was open).
 */
async function endMembership(tx: Tx, clubId: string, userId: string): Promise<string> {
  const now = new Date();
  const shareIds = (
    await tx
      .select({ id: shares.id })
      .from(shares)
      .innerJoin(checks, eq(checks.id, shares.checkId))
      .where(and(eq(shares.clubId, clubId), eq(checks.ownerId, userId), isNull(shares.withdrawnAt)))
      .for("update")
  ).map((r) => r.id);
  const offerIds = (
    await tx
      .select({ id: poolOffers.id })
      .from(poolOffers)
      .where(and(eq(poolOffers.clubId, clubId), eq(poolOffers.ownerId, userId), isNull(poolOffers.withdrawnAt)))
      .for("update")
  ).map((r) => r.id);
  const open = await tx
    .select({ id: borrowRequests.id, lenderId: borrowRequests.lenderId })
    .from(borrowRequests)
    .innerJoin(poolOffers, eq(poolOffers.id, borrowRequests.offerId))
    .where(
      and(
        eq(poolOffers.clubId, clubId),
        or(eq(borrowRequests.lenderId, userId), eq(borrowRequests.borrowerId, userId)),
        inArray(borrowRequests.state, [...HOLDING]),
      ),
    )
    .for("update");
  if (shareIds.length + offerIds.length + open.length === 0) return "";
  // the member's rows: their next change version, whoever removes them
  const version = await nextVersion(tx, userId);
  if (shareIds.length) await tx.update(shares).set({ withdrawnAt: now, version }).where(inArray(shares.id, shareIds));
  if (offerIds.length)
    await tx.update(poolOffers).set({ withdrawnAt: now, version }).where(inArray(poolOffers.id, offerIds));
  const lent = open.filter((r) => r.lenderId === userId).map((r) => r.id);
  const asked = open.filter((r) => r.lenderId !== userId).map((r) => r.id);
  if (lent.length)
    await tx.update(borrowRequests).set({ state: "declined", version }).where(inArray(borrowRequests.id, lent));
  if (asked.length)
    await tx.update(borrowRequests).set({ state: "withdrawn", version }).where(inArray(borrowRequests.id, asked));
  const n = (k: number, one: string) => (k ? [`${k} ${one}${k > 1 ? "s" : ""}`] : []);
  return `; ended ${[...n(shareIds.length, "share"), ...n(offerIds.length, "offer"), ...n(open.length, "request")].join(", ")}`;
}

const hash = (raw: string) => createHash("sha256").update(raw).digest("hex");

export async function createInvite(tx: Tx, clubId: string, invitedBy: string, email: string, role: Role) {
  const raw = randomBytes(32).toString("base64url");
  const id = crypto.randomUUID();
  await tx.insert(invites).values({
    id,
    clubId,
    email,
    role,
    invitedBy,
    tokenHash: hash(raw),
    expiresAt: new Date(Date.now() + 14 * 86_400_000),
  });
  await log(tx, { clubId, actorId: invitedBy, action: "invite-sent", subjectEmail: email, detail: role });
  return { id, token: raw };
}

export async function listInvites(clubId: string) {
  return db()
    .select({
      id: invites.id,
      email: invites.email,
      role: invites.role,
      expiresAt: invites.expiresAt,
      acceptedAt: invites.acceptedAt,
      withdrawnAt: invites.withdrawnAt,
      createdAt: invites.createdAt,
    })
    .from(invites)
    .where(eq(invites.clubId, clubId))
    .orderBy(desc(invites.createdAt));
}

/** Withdraw a pending invitation, inside the caller's transaction; false when this club has no such pending one. */
export async function withdrawInvite(tx: Tx, clubId: string, inviteId: string, actorId: string): Promise<boolean> {
  const [inv] = await tx
    .select()
    .from(invites)
    .where(and(eq(invites.id, inviteId), eq(invites.clubId, clubId)))
    .for("update");
  if (!inv || inv.acceptedAt) return false;
  if (inv.withdrawnAt) return true; // withdrawn twice: the same result
  await tx.update(invites).set({ withdrawnAt: new Date() }).where(eq(invites.id, inviteId));
  await log(tx, { clubId, actorId, action: "invite-withdrawn", subjectEmail: inv.email, detail: inv.role });
  return true;
}

/** A pending invitation by its token (unexpired, unused, not withdrawn), locked for the acceptance. */
export async function lockPendingInvite(tx: Tx, raw: string) {
  const [inv] = await tx
    .select()
    .from(invites)
    .where(
      and(
        eq(invites.tokenHash, hash(raw)),
        isNull(invites.acceptedAt),
        isNull(invites.withdrawnAt),
        gt(invites.expiresAt, new Date()),
      ),
    )
    .for("update");
  return inv;
}

/**
 * The invitation used, in the caller's transaction (server/access.ts acceptableInvite decided it may
 * be): the invitee gains its role (and mechanic), with a line in the club log. Answers the club's name.
 */
export async function joinByInvite(tx: Tx, inv: typeof invites.$inferSelect, userId: string) {
  await tx.update(invites).set({ acceptedAt: new Date() }).where(eq(invites.id, inv.id));
  const have = await tx
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.clubId, inv.clubId), eq(memberships.userId, userId)));
  const want = [...new Set<Role>(["mechanic", inv.role])].filter((r) => !have.some((h) => h.role === r));
  if (want.length) await tx.insert(memberships).values(want.map((role) => ({ clubId: inv.clubId, userId, role })));
  const after = [...new Set([...have.map((h) => h.role), ...want])];
  await log(tx, {
    clubId: inv.clubId,
    actorId: userId,
    action: "invite-accepted",
    subjectUserId: userId,
    subjectEmail: inv.email,
    detail: `${rolesWord(have.map((h) => h.role))} → ${rolesWord(after)}`,
  });
  const [club] = await tx.select({ name: clubs.name }).from(clubs).where(eq(clubs.id, inv.clubId)).limit(1);
  return { clubId: inv.clubId, clubName: club?.name ?? "the club" };
}

/** The club log, newest first, with the names of who acted and on whom. */
export async function listClubLog(clubId: string, limit: number, offset: number) {
  const subject = alias(users, "subject");
  return (
    db()
      // an actor whose account was deleted is named as such (the entry stays: it is the club's record)
      .select({
        id: clubLog.id,
        action: clubLog.action,
        at: clubLog.at,
        actorName: sql<string>`coalesce(${users.name}, ${FORMER_MEMBER})`,
        subjectName: subject.name,
        subjectEmail: clubLog.subjectEmail,
        detail: clubLog.detail,
      })
      .from(clubLog)
      .leftJoin(users, eq(users.id, clubLog.actorId))
      .leftJoin(subject, eq(subject.id, clubLog.subjectUserId))
      .where(eq(clubLog.clubId, clubId))
      .orderBy(desc(clubLog.seq))
      .limit(limit + 1)
      .offset(offset)
  );
}

export const shareToApi = (s: ShareRow) => ({
  id: s.id,
  checkId: s.checkId,
  clubId: s.clubId,
  verdict: s.verdict,
  verdictAt: s.verdictAt,
  withdrawnAt: s.withdrawnAt,
  createdAt: s.createdAt,
});

export async function getShare(ex: Executor, shareId: string) {
  const [s] = await ex.select().from(shares).where(eq(shares.id, shareId)).limit(1);
  return s;
}

export async function listSharesOfCheck(checkId: string) {
  const rows = await db().select().from(shares).where(eq(shares.checkId, checkId)).orderBy(desc(shares.createdAt));
  return rows.map(shareToApi);
}

/** Share (or share again after a withdrawal) a check with a club. */
export async function shareCheck(tx: Tx, version: number, checkId: string, clubId: string, userId: string) {
  await tx
    .insert(shares)
    .values({ checkId, clubId, sharedBy: userId, version })
    .onDuplicateKeyUpdate({ set: { withdrawnAt: null, version } });
  const [s] = await tx
    .select()
    .from(shares)
    .where(and(eq(shares.checkId, checkId), eq(shares.clubId, clubId)))
    .limit(1);
  return shareToApi(s!);
}

export async function withdrawShare(tx: Tx, version: number, shareId: string) {
  await tx.update(shares).set({ withdrawnAt: new Date(), version }).where(eq(shares.id, shareId));
}

/** The verdict write itself, inside the caller's transaction (the REST route's or a sync push's). */
export async function writeVerdict(
  tx: Tx,
  version: number,
  shareId: string,
  mentorId: string,
  verdict: NonNullable<ShareRow["verdict"]>,
) {
  await tx
    .update(shares)
    .set({ verdict, verdictBy: mentorId, verdictAt: new Date(), version })
    .where(eq(shares.id, shareId));
}

/** Clubs where the user is a mentor and the check is shared (not withdrawn), the earliest share first. */
export async function mentorSharesForCheck(ex: Executor, userId: string, checkId: string) {
  return ex
    .select({ shareId: shares.id, clubId: shares.clubId })
    .from(shares)
    .innerJoin(
      memberships,
      and(eq(memberships.clubId, shares.clubId), eq(memberships.userId, userId), eq(memberships.role, "mentor")),
    )
    .where(and(eq(shares.checkId, checkId), isNull(shares.withdrawnAt)))
    .orderBy(asc(shares.createdAt), asc(shares.id));
}

/** The review queue of a club: shared checks, newest first. */
export async function reviewQueue(clubId: string, limit: number, offset: number) {
  return db()
    .select({
      shareId: shares.id,
      checkId: checks.id,
      engineName: engines.name,
      odometerUnit: engines.odometerUnit,
      ownerName: users.name,
      odometer: checks.odometer,
      status: checks.status,
      verdict: shares.verdict,
      sharedAt: shares.createdAt,
    })
    .from(shares)
    .innerJoin(checks, eq(checks.id, shares.checkId))
    .innerJoin(engines, eq(engines.id, checks.engineId))
    .innerJoin(users, eq(users.id, checks.ownerId))
    .where(and(eq(shares.clubId, clubId), isNull(shares.withdrawnAt)))
    .orderBy(desc(shares.createdAt))
    .limit(limit + 1)
    .offset(offset);
}

/** Every comment on a check, of every club's thread: callers filter with server/access.ts visibleComments. */
export async function listComments(ex: Executor, checkId: string) {
  return (
    ex
      // a deleted account's comments stay, without its name (lib/account/deletion.ts)
      .select({
        id: comments.id,
        checkId: comments.checkId,
        clubId: comments.clubId,
        valve: comments.valve,
        body: comments.body,
        createdAt: comments.createdAt,
        authorId: comments.authorId,
        authorName: sql<string>`coalesce(${users.name}, ${FORMER_MEMBER})`,
      })
      .from(comments)
      .leftJoin(users, eq(users.id, comments.authorId))
      .where(eq(comments.checkId, checkId))
      .orderBy(asc(comments.createdAt), asc(comments.id))
  );
}

/**
 * A comment, once: the same id sent again by its author on the same check (a retried sync) changes
 * nothing and answers "again"; an id already used by anyone else, or on another check, answers
 * "taken" and writes nothing (the applier refuses it).
 */
export async function insertComment(
  tx: Tx,
  version: number,
  checkId: string,
  authorId: string,
  clubId: string | null,
  input: { id: string; body: string; valve?: string | null },
): Promise<"added" | "again" | "taken"> {
  const [c] = await tx
    .select({ checkId: comments.checkId, authorId: comments.authorId })
    .from(comments)
    .where(eq(comments.id, input.id))
    .limit(1);
  if (c) return c.checkId === checkId && c.authorId === authorId ? "again" : "taken";
  await tx
    .insert(comments)
    .values({ id: input.id, checkId, authorId, clubId, body: input.body, valve: input.valve ?? null, version });
  return "added";
}

export async function usersByIds(ids: string[]) {
  if (ids.length === 0) return [];
  return db()
    .select({ id: users.id, email: users.email, name: users.name, noticesByEmail: users.noticesByEmail })
    .from(users)
    .where(inArray(users.id, ids));
}

export async function mentorsOfClub(clubId: string) {
  return db()
    .select({ id: users.id, email: users.email, name: users.name, noticesByEmail: users.noticesByEmail })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.clubId, clubId), eq(memberships.role, "mentor")));
}
