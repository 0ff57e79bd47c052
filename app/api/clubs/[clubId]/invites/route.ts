import { z } from "zod";
import { inviteInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { sendInvitation, withInviteBudget } from "@/server/invite-mail";
import { inviteToClub } from "@/server/clubs";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { listInvites } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam });

export const GET = route({ response: answers.invites, params }, async ({ user, params }) => {
  await clubRole(db(), user, params.clubId, "admin");
  return { items: await listInvites(params.clubId) };
});

export const POST = route(
  { response: answers.invite, params, body: inviteInput, status: 201 },
  async ({ user, params, body }) => {
    // only an admin spends the budgets: anyone else is refused before anything is counted
    await clubRole(db(), user, params.clubId, "admin");
    const { club, invite } = await withInviteBudget(user.id, body.email, () =>
      write(user, (w) => inviteToClub(w, params.clubId, body.email, body.role)),
    );
    await sendInvitation({
      email: body.email,
      inviterName: user.name,
      clubName: club.name,
      role: body.role,
      token: invite.token,
    });
    return { invite: { id: invite.id, email: body.email, role: body.role } };
  },
);
