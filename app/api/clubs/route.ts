import { clubInput } from "@/lib/schemas/records";
import { route } from "@/server/http";
import { createClub } from "@/server/clubs";
import { write } from "@/server/write";
import { listMyClubs } from "@/db/queries/clubs";

export const GET = route({}, async ({ user }) => ({ items: await listMyClubs(user.id) }));

export const POST = route({ body: clubInput, status: 201 }, async ({ user, body }) => ({
  club: await write(user, (w) => createClub(w, body.name)),
}));
