import { tokenInput } from "@/lib/schemas/account";
import { DomainError } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { acceptInvite } from "@/db/queries/clubs";

export const POST = route({ response: answers.inviteAccepted, body: tokenInput }, async ({ user, body }) => {
  const r = await acceptInvite(body.token, user);
  if (!r)
    throw new DomainError("bad_request", "This invitation has expired, was used, or was sent to another address", {
      code: "bad_token",
    });
  return { clubId: r.clubId, clubName: r.clubName };
});
