import { z } from "zod";
import type { Role } from "@/db/schema";
import { rolesInput } from "@/lib/schemas/records";
import { conflict, notFound } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubRole, memberRemover } from "@/server/access";
import { write } from "@/server/write";
import { listMembers, lockClubRoles, rolesInClub, setRoles } from "@/db/queries/clubs";
import type { Tx } from "@/db/client";

const params = z.object({ clubId: uuidParam, userId: uuidParam });

/** Change a member's roles in one transaction with the checks, so two admins cannot both step down. */
async function changeRoles(tx: Tx, clubId: string, userId: string, roles: Role[], actorId: string) {
  const { admins } = await lockClubRoles(tx, clubId);
  const have = await rolesInClub(tx, userId, clubId);
  if (have.length === 0) throw notFound("member");
  if (have.includes("admin") && !roles.includes("admin") && admins <= 1)
    throw conflict("A club needs at least one admin");
  await setRoles(tx, clubId, userId, roles, actorId);
}

export const PUT = route({ response: answers.member, params, body: rolesInput }, async ({ user, params, body }) => ({
  member: await write(user, async (w) => {
    await clubRole(w.tx, user, params.clubId, "admin");
    await changeRoles(w.tx, params.clubId, params.userId, body.roles, user.id);
    return (await listMembers(w.tx, params.clubId)).find((m) => m.userId === params.userId);
  }),
}));

/**
 * Remove a member (an admin), or leave (the member themselves). Either ends, in the same
 * transaction, what the membership held open: shares with the club, pool offers, open requests.
 */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await memberRemover(w.tx, user, params.clubId, params.userId);
    await changeRoles(w.tx, params.clubId, params.userId, [], user.id);
  });
});
