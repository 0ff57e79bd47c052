import { verifyInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { verifyEmail } from "@/server/account";

export const POST = route({ response: answers.verified, auth: false, body: verifyInput }, async ({ body }) => {
  const { email } = await verifyEmail(body.token, body.password);
  return { ok: true, email };
});
