import { tokenInput } from "@/lib/schemas/account";
import { ApiError, route } from "@/server/http";
import { acceptInvite } from "@/db/queries/clubs";

export const POST = route({ body: tokenInput }, async ({ user, body }) => {
  const r = await acceptInvite(body.token, user);
  if (!r) throw new ApiError(400, "bad_token", "This invitation has expired, was used, or was sent to another address");
  return { clubId: r.clubId };
});
