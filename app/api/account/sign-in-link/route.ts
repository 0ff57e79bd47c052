import { emailOnlyInput } from "@/lib/schemas/account";
import { route } from "@/server/http";
import { requestSignInLink } from "@/server/account";

export const POST = route({ auth: false, body: emailOnlyInput, status: 202 }, async ({ body }) => {
  await requestSignInLink(body.email);
  return { ok: true, message: "If that address has an account, a sign-in link is on its way." };
});
