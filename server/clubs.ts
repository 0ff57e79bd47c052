import "server-only";
import type { Role } from "@/db/schema";
import { notFound } from "@/lib/errors";
import * as q from "@/db/queries/clubs";
import { acceptableInvite, clubMember, clubRole, memberRemover, ownCheck, roleChange, shareFor } from "./access";
import { noticeReviewRequested } from "./review";
import type { WriteCtx } from "./write";
import { writeService } from "@/db/write-path";

/**
 * The club writes that have no outbox mutation (phones do these online): each takes the write
 * context (server/write.ts), authorises through server/access.ts with its transaction, and writes
 * in the same transaction. The REST routes call these inside write(); nothing here opens its own.
 * Each is a named write service (db/write-path.ts): what it writes counts as the write path's.
 */

/** A new club; its creator becomes admin (and a mechanic member). */
export const createClub = writeService("clubs", async (w: WriteCtx, name: string) => {
  const id = crypto.randomUUID();
  await q.insertClub(w.tx, id, name, w.user.id);
  return { id, name, roles: ["admin", "mechanic"] as Role[] };
});

/** Accept an invitation once (access.ts acceptableInvite says which); answers the club joined. */
export const acceptInvite = writeService("clubs", async (w: WriteCtx, token: string) => {
  const inv = await acceptableInvite(w.tx, w.user, token);
  return q.joinByInvite(w.tx, inv, w.user.id);
});

/** An admin invites an address to a role; answers the club (for the mail) and the new invitation. */
export const inviteToClub = writeService("clubs", async (w: WriteCtx, clubId: string, email: string, role: Role) => {
  await clubRole(w.tx, w.user, clubId, "admin");
  return {
    club: (await q.getClub(w.tx, clubId))!,
    invite: await q.createInvite(w.tx, clubId, w.user.id, email, role),
  };
});

/** An admin withdraws a pending invitation: its link stops working at once. */
export const withdrawInvitation = writeService("clubs", async (w: WriteCtx, clubId: string, inviteId: string) => {
  await clubRole(w.tx, w.user, clubId, "admin");
  if (!(await q.withdrawInvite(w.tx, clubId, inviteId, w.user.id))) throw notFound("pending invitation");
});

/** An admin sets a member's roles, keeping the club an admin; answers the member as now listed. */
export const setMemberRoles = writeService(
  "clubs",
  async (w: WriteCtx, clubId: string, memberId: string, roles: Role[]) => {
    await clubRole(w.tx, w.user, clubId, "admin");
    await roleChange(w.tx, clubId, memberId, roles, await q.lockClubRoles(w.tx, clubId));
    await q.setRoles(w.tx, clubId, memberId, roles, w.user.id);
    return (await q.listMembers(w.tx, clubId)).find((m) => m.userId === memberId);
  },
);

/**
 * Remove a member (an admin), or leave (the member themselves). Either ends, in the same
 * transaction, what the membership held open: shares with the club, pool offers, open requests.
 */
export const removeMember = writeService("clubs", async (w: WriteCtx, clubId: string, memberId: string) => {
  await memberRemover(w.tx, w.user, clubId, memberId);
  await roleChange(w.tx, clubId, memberId, [], await q.lockClubRoles(w.tx, clubId));
  await q.setRoles(w.tx, clubId, memberId, [], w.user.id);
});

/** The owner shares a check with a club they are in; its mentors are told after the commit. */
export const shareCheck = writeService("clubs", async (w: WriteCtx, checkId: string, clubId: string) => {
  const check = await ownCheck(w.tx, w.user, checkId);
  await clubMember(w.tx, w.user, clubId);
  w.later(() => noticeReviewRequested(check, clubId, w.user.name));
  return q.shareCheck(w.tx, w.version, checkId, clubId, w.user.id);
});

/** The owner withdraws a share: the club's mentors lose access at once. */
export const withdrawShare = writeService("clubs", async (w: WriteCtx, shareId: string) => {
  await shareFor(w.tx, w.user, shareId, "owner");
  await q.withdrawShare(w.tx, w.version, shareId);
});
