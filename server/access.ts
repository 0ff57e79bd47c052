import "server-only";
import type { CheckRow, Role } from "@/db/schema";
import type { Executor, Tx } from "@/db/connection";
import { conflict, DomainError, forbidden, notFound, refused } from "@/lib/errors";
import { MOVES, type BorrowMove } from "@/lib/pool/rules";
import { getCheckAndEngine, getCheckRow, getEngineRow, getTrayRow } from "@/db/queries/garage";
import { getShare, lockPendingInvite, mentorSharesForCheck, rolesInClub } from "@/db/queries/clubs";
import type { SessionUser } from "./auth";

/**
 * The authorisation rules of README "Club review and photos", in one place. Owners do everything with their
 * own engines, checks, readings and tray. A mentor reads only checks shared with a club in which
 * they are a mentor, and writes only comments and verdicts there. An admin manages the members of
 * their club and never reads unshared checks. A record the caller may not even read answers 404,
 * exactly as one that does not exist, so no id can be probed; one they may read but not change
 * answers 403.
 *
 * Every rule takes the executor it reads through: a write passes its own transaction, so the
 * decision and the change it allows are one transaction and no second connection is asked for.
 */

export async function ownEngine(ex: Executor, user: SessionUser, engineId: string) {
  const e = await getEngineRow(ex, engineId);
  if (!e || e.ownerId !== user.id) throw notFound("engine");
  return e;
}

/** A record the caller writes by its id: theirs, or not there yet (a new one); anyone else's is "no such". */
function ownOrNew<R extends { ownerId: string }>(row: R | undefined, user: SessionUser, what: string): R | undefined {
  if (row && row.ownerId !== user.id) throw notFound(what);
  return row;
}

export const ownOrNewEngine = async (ex: Executor, user: SessionUser, id: string) =>
  ownOrNew(await getEngineRow(ex, id), user, "engine");
export const ownOrNewTrayItem = async (ex: Executor, user: SessionUser, id: string) =>
  ownOrNew(await getTrayRow(ex, id), user, "tray item");

export type CheckAccess = {
  check: CheckRow;
  as: "owner" | "mentor";
  mentorShares: { shareId: string; clubId: string }[];
};

export async function readableCheck(ex: Executor, user: SessionUser, checkId: string): Promise<CheckAccess> {
  return readableCheckRow(ex, user, checkId, await getCheckRow(ex, checkId));
}

/** readableCheck for a check row already read in the caller's transaction (undefined: none). */
async function readableCheckRow(
  ex: Executor,
  user: SessionUser,
  checkId: string,
  c: CheckRow | undefined,
): Promise<CheckAccess> {
  if (!c) throw notFound("check");
  if (c.ownerId === user.id) return { check: c, as: "owner", mentorShares: [] };
  const mentorShares = await mentorSharesForCheck(ex, user.id, checkId);
  if (mentorShares.length === 0) throw notFound("check");
  return { check: c, as: "mentor", mentorShares };
}

/**
 * Who reads which comments of a check shared with several clubs: each club's review is its own
 * thread. The owner reads every thread; a mentor reads the owner's comments (addressed to every
 * club it is shared with), their own, and those written in a club where they are a mentor of a live
 * share. One club's mentors never read another club's discussion of the same check (OWASP ASVS 5.0
 * V8 Authorization: data is reachable only through the relationship that grants it).
 */
export function visibleComments<C extends { authorId: string | null; clubId: string | null }>(
  a: CheckAccess,
  user: SessionUser,
  all: C[],
): C[] {
  if (a.as === "owner") return all;
  const clubs = new Set(a.mentorShares.map((s) => s.clubId));
  return all.filter(
    (c) => c.authorId === a.check.ownerId || c.authorId === user.id || (c.clubId !== null && clubs.has(c.clubId)),
  );
}

/**
 * The thread a new comment joins: none for the owner's (read by all); a mentor's, the club of their
 * earliest live share of the check (a mentor of several such clubs reads all their threads anyway).
 */
export const commentClub = (a: CheckAccess): string | null => (a.as === "owner" ? null : a.mentorShares[0]!.clubId);

function ownerOnly(a: CheckAccess) {
  if (a.as !== "owner") throw forbidden("Only the check's owner can change it; mentors comment and give a verdict");
  return a.check;
}

export async function ownCheck(ex: Executor, user: SessionUser, checkId: string) {
  return ownerOnly(await readableCheck(ex, user, checkId));
}

/**
 * ownCheck and the check's engine, read in one statement: readings are checked against their
 * engine, and a push writes a run of them (the engine is null only if the schema's key were broken).
 */
export async function ownCheckAndEngine(ex: Executor, user: SessionUser, checkId: string) {
  const found = await getCheckAndEngine(ex, checkId);
  const check = ownerOnly(await readableCheckRow(ex, user, checkId, found?.check));
  return { check, engine: found!.engine };
}

/** A check written by its id: the owner's, or a new one; a mentor may not, a stranger sees "no such". */
export async function ownOrNewCheck(ex: Executor, user: SessionUser, checkId: string) {
  const c = await getCheckRow(ex, checkId);
  return c ? ownCheck(ex, user, checkId) : undefined;
}

export async function ownTrayItem(ex: Executor, user: SessionUser, itemId: string) {
  const t = await getTrayRow(ex, itemId);
  if (!t || t.ownerId !== user.id) throw notFound("tray item");
  return t;
}

export async function clubMember(ex: Executor, user: SessionUser, clubId: string): Promise<Role[]> {
  const roles = await rolesInClub(ex, user.id, clubId);
  if (roles.length === 0) throw notFound("club");
  return roles;
}

export async function clubRole(ex: Executor, user: SessionUser, clubId: string, role: Role): Promise<Role[]> {
  const roles = await clubMember(ex, user, clubId);
  if (!roles.includes(role)) throw forbidden(`Only a club ${role} can do this`);
  return roles;
}

/** A share the caller may act on: the check's owner (withdraw) or a mentor of its club (verdict). */
export async function shareFor(ex: Executor, user: SessionUser, shareId: string, as: "owner" | "mentor") {
  const s = await getShare(ex, shareId);
  if (!s) throw notFound("share");
  const c = await getCheckRow(ex, s.checkId);
  const isOwner = c?.ownerId === user.id;
  const isMentor = !s.withdrawnAt && (await rolesInClub(ex, user.id, s.clubId)).includes("mentor");
  if (!isOwner && !isMentor) throw notFound("share");
  if (as === "owner" && !isOwner) throw forbidden("Only the check's owner can withdraw a share");
  if (as === "mentor" && !isMentor) throw forbidden("Only a mentor of the club gives a verdict");
  // a review is a second pair of eyes: nobody passes their own check, whatever their role
  if (as === "mentor" && isOwner)
    throw forbidden("A mentor cannot give a verdict on their own check: another mentor of the club reviews it");
  return { share: s, check: c! };
}

/**
 * Who may end a membership: a club admin (removing a member), or the member themselves (leaving).
 * The last admin rule is roleChange's.
 */
export async function memberRemover(
  ex: Executor,
  user: SessionUser,
  clubId: string,
  memberId: string,
): Promise<Role[]> {
  if (memberId === user.id) return clubMember(ex, user, clubId);
  return clubRole(ex, user, clubId, "admin");
}

/**
 * A change of a member's roles keeps the club an admin. `admins` is counted by lockClubRoles
 * (db/queries/clubs.ts) in the same write, before this: the club's roles locked, so two admins
 * stepping down at once cannot both. The member must be in the club. Answers their roles before.
 */
export async function roleChange(
  tx: Tx,
  clubId: string,
  memberId: string,
  roles: Role[],
  { admins }: { admins: number },
): Promise<Role[]> {
  const have = await rolesInClub(tx, memberId, clubId);
  if (have.length === 0) throw notFound("member");
  if (have.includes("admin") && !roles.includes("admin") && admins <= 1)
    throw conflict("A club needs at least one admin");
  return have;
}

/**
 * An invitation the caller may accept: pending (unexpired, unused, not withdrawn), addressed to the
 * caller's e-mail, and sent by someone who is still an admin of the club (an invitation speaks for
 * an admin). Any other token answers the same, so none can be probed. Locked for the acceptance.
 */
export async function acceptableInvite(tx: Tx, user: SessionUser, token: string) {
  const inv = await lockPendingInvite(tx, token);
  const fromAdmin = inv?.invitedBy ? (await rolesInClub(tx, inv.invitedBy, inv.clubId)).includes("admin") : false;
  if (!inv || inv.email !== user.email || !fromAdmin)
    throw new DomainError("bad_request", "This invitation has expired, was used, or was sent to another address", {
      code: "bad_token",
    });
  return inv;
}

/**
 * A loan (a borrow request) the caller is a side of, and the side: anyone else's answers "no such".
 * A step is taken only by the side the loan's rules give it to (lib/pool/rules.ts MOVES).
 */
export function loanSide(
  r: { borrowerId: string; lenderId: string } | undefined,
  user: SessionUser,
  move?: BorrowMove,
): "lender" | "borrower" {
  if (!r || (r.borrowerId !== user.id && r.lenderId !== user.id)) throw notFound("request");
  const side = r.lenderId === user.id ? "lender" : "borrower";
  if (move && MOVES[move].by !== side) throw refused(`only the ${MOVES[move].by} can do that`);
  return side;
}

/** A pool offer the caller owns (to withdraw it, or to find it again when sent twice): anyone else's is "no such". */
export function ownOffer<O extends { ownerId: string }>(o: O | undefined, user: SessionUser): O {
  if (!o || o.ownerId !== user.id) throw notFound("offer");
  return o;
}

/** A request id the caller sends: theirs (sent again), or not there yet; anyone else's is "no such". */
export function ownBorrowOrNew<R extends { borrowerId: string }>(r: R | undefined, user: SessionUser): R | undefined {
  if (r && r.borrowerId !== user.id) throw notFound("request");
  return r;
}

/** The check a request is for: the asker's own; anyone else's, even one they mentor, is "no such". */
export async function askingCheck(ex: Executor, user: SessionUser, checkId: string) {
  const c = await getCheckRow(ex, checkId);
  if (!c || c.ownerId !== user.id) throw notFound("check");
  return c;
}

/**
 * An offer the caller may ask for: open, in a club they are in now (a locking read, so an ask racing
 * the asker's removal from the club cannot slip in after it), and someone else's.
 */
export async function askableOffer<O extends { clubId: string; ownerId: string; withdrawnAt: Date | null }>(
  tx: Tx,
  user: SessionUser,
  o: O | undefined,
): Promise<O> {
  if (!o || o.withdrawnAt || (await rolesInClub(tx, user.id, o.clubId, true)).length === 0)
    throw new DomainError("not_found", "That offer is no longer there");
  if (o.ownerId === user.id) throw refused("these are your own shims: they are on your tray");
  return o;
}

/** A device's row for a push: the caller's (the row was made for them on first sight), or refused. */
export function ownDevice(c: { userId: string; lastMutationId: number } | undefined, user: SessionUser): number {
  if (!c || c.userId !== user.id) throw forbidden("This device belongs to another account");
  return c.lastMutationId;
}
