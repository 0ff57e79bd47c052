import { z } from "zod";
import { inviteInput } from "@/lib/schemas/records";
import { env } from "@/lib/env";
import { route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { queueNotices } from "@/server/notices";
import { write } from "@/server/write";
import { db } from "@/db/client";
import { createInvite, getClub, listInvites } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  await clubRole(db(), user, params.clubId, "admin");
  return { items: await listInvites(params.clubId) };
});

export const POST = route({ params, body: inviteInput, status: 201 }, async ({ user, params, body }) => {
  const { club, invite } = await write(user, async (w) => {
    await clubRole(w.tx, user, params.clubId, "admin");
    return { club: (await getClub(w.tx, params.clubId))!, invite: await createInvite(w.tx, params.clubId, user.id, body.email, body.role) };
  });
  await queueNotices([
    {
      toEmail: body.email,
      kind: "invite",
      subject: `${user.name} invites you to ${club.name} on Lashwright`,
      body: `${user.name} invites you to join ${club.name} as a ${body.role}.\n\nOpen this link to accept (sign up first if you are new):\n${env().NEXTAUTH_URL}/invite?token=${invite.token}\n\nThe invitation is valid for 14 days.`,
    },
  ]);
  return { invite: { id: invite.id, email: body.email, role: body.role } };
});
