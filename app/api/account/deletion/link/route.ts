import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { clientAddress } from "@/server/throttle";
import { requestDeleteLink } from "@/server/account-deletion";

/** An account without a password confirms its deletion through a link mailed to its address. */
export const POST = route({ response: answers.accepted, status: 202 }, async ({ user, req }) => {
  await requestDeleteLink(user, clientAddress(req.headers));
  return { ok: true, message: "A link is on its way to your address." };
});
