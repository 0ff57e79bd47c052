import { clubInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { createClub } from "@/server/clubs";
import { write } from "@/server/write";
import { listMyClubs } from "@/db/queries/clubs";

export const GET = route({ response: answers.clubs }, async ({ user }) => ({ items: await listMyClubs(user.id) }));

export const POST = route({ response: answers.clubCreated, body: clubInput, status: 201 }, async ({ user, body }) => ({
  club: await write(user, (w) => createClub(w, body.name)),
}));
