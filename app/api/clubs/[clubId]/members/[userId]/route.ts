import { z } from "zod";
import { rolesInput } from "@/lib/schemas/records";
import { conflict, notFound, route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { countAdmins, listMembers, rolesInClub, setRoles } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam, userId: uuidParam });

async function guardLastAdmin(clubId: string, userId: string, keepsAdmin: boolean) {
  const roles = await rolesInClub(userId, clubId);
  if (roles.length === 0) throw notFound("member");
  if (roles.includes("admin") && !keepsAdmin && (await countAdmins(clubId)) <= 1) throw conflict("A club needs at least one admin");
}

export const PUT = route({ params, body: rolesInput }, async ({ user, params, body }) => {
  await clubRole(user, params.clubId, "admin");
  await guardLastAdmin(params.clubId, params.userId, body.roles.includes("admin"));
  await setRoles(params.clubId, params.userId, body.roles);
  return { member: (await listMembers(params.clubId)).find((m) => m.userId === params.userId) };
});

export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await clubRole(user, params.clubId, "admin");
  await guardLastAdmin(params.clubId, params.userId, false);
  await setRoles(params.clubId, params.userId, []);
});
