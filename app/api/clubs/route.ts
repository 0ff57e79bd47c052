import { clubInput } from "@/lib/schemas/records";
import { route } from "@/server/http";
import { createClub, listMyClubs } from "@/db/queries/clubs";

export const GET = route({}, async ({ user }) => ({ items: await listMyClubs(user.id) }));

export const POST = route({ body: clubInput, status: 201 }, async ({ user, body }) => ({
  club: await createClub(user.id, body.name),
}));
