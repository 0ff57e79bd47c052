import { tokenInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { acceptInvite } from "@/server/clubs";
import { write } from "@/server/write";

export const POST = route({ response: answers.inviteAccepted, body: tokenInput }, async ({ user, body }) => {
  const r = await write(user, (w) => acceptInvite(w, body.token));
  return { clubId: r.clubId, clubName: r.clubName };
});
