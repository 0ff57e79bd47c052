import { z } from "zod";
import { rolesInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { removeMember, setMemberRoles } from "@/server/clubs";
import { write } from "@/server/write";

const params = z.object({ clubId: uuidParam, userId: uuidParam });

/** Change a member's roles in one transaction with the checks, so two admins cannot both step down. */
export const PUT = route({ response: answers.member, params, body: rolesInput }, async ({ user, params, body }) => ({
  member: await write(user, (w) => setMemberRoles(w, params.clubId, params.userId, body.roles)),
}));

/**
 * Remove a member (an admin), or leave (the member themselves). Either ends, in the same
 * transaction, what the membership held open: shares with the club, pool offers, open requests.
 */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, (w) => removeMember(w, params.clubId, params.userId));
});
