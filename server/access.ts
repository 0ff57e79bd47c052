import "server-only";
import type { Role } from "@/db/schema";
import { getCheckRow, getEngineRow, getTrayRow } from "@/db/queries/garage";
import { getShare, mentorSharesForCheck, rolesInClub } from "@/db/queries/clubs";
import { forbidden, notFound } from "./http";
import type { SessionUser } from "./auth";

/**
 * The authorisation rules of DESIGN.md section 2, in one place. Owners do everything with their
 * own engines, checks, readings and tray. A mentor reads only checks shared with a club in which
 * they are a mentor, and writes only comments and verdicts there. An admin manages the members of
 * their club and never reads unshared checks. A record the caller may not even read answers 404,
 * exactly as one that does not exist, so no id can be probed; one they may read but not change
 * answers 403.
 */

export async function ownEngine(user: SessionUser, engineId: string) {
  const e = await getEngineRow(engineId);
  if (!e || e.ownerId !== user.id) throw notFound("engine");
  return e;
}

export type CheckAccess = { check: NonNullable<Awaited<ReturnType<typeof getCheckRow>>>; as: "owner" | "mentor"; mentorShares: { shareId: string; clubId: string }[] };

export async function readableCheck(user: SessionUser, checkId: string): Promise<CheckAccess> {
  const c = await getCheckRow(checkId);
  if (!c) throw notFound("check");
  if (c.ownerId === user.id) return { check: c, as: "owner", mentorShares: [] };
  const mentorShares = await mentorSharesForCheck(user.id, checkId);
  if (mentorShares.length === 0) throw notFound("check");
  return { check: c, as: "mentor", mentorShares };
}

export async function ownCheck(user: SessionUser, checkId: string) {
  const a = await readableCheck(user, checkId);
  if (a.as !== "owner") throw forbidden("Only the check's owner can change it; mentors comment and give a verdict");
  return a.check;
}

export async function ownTrayItem(user: SessionUser, itemId: string) {
  const t = await getTrayRow(itemId);
  if (!t || t.ownerId !== user.id) throw notFound("tray item");
  return t;
}

export async function clubMember(user: SessionUser, clubId: string): Promise<Role[]> {
  const roles = await rolesInClub(user.id, clubId);
  if (roles.length === 0) throw notFound("club");
  return roles;
}

export async function clubRole(user: SessionUser, clubId: string, role: Role): Promise<Role[]> {
  const roles = await clubMember(user, clubId);
  if (!roles.includes(role)) throw forbidden(`Only a club ${role} can do this`);
  return roles;
}

/** A share the caller may act on: the check's owner (withdraw) or a mentor of its club (verdict). */
export async function shareFor(user: SessionUser, shareId: string, as: "owner" | "mentor") {
  const s = await getShare(shareId);
  if (!s) throw notFound("share");
  const c = await getCheckRow(s.checkId);
  const isOwner = c?.ownerId === user.id;
  const isMentor = !s.withdrawnAt && (await rolesInClub(user.id, s.clubId)).includes("mentor");
  if (!isOwner && !isMentor) throw notFound("share");
  if (as === "owner" && !isOwner) throw forbidden("Only the check's owner can withdraw a share");
  if (as === "mentor" && !isMentor) throw forbidden("Only a mentor of the club gives a verdict");
  return { share: s, check: c! };
}
