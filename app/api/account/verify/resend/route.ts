import { emailOnlyInput } from "@/lib/schemas/account";
import { route } from "@/server/http";
import { resendVerification } from "@/server/account";

export const POST = route({ auth: false, body: emailOnlyInput, status: 202 }, async ({ body }) => {
  await resendVerification(body.email);
  return { ok: true, message: "If that address has an account waiting for confirmation, a new link is on its way." };
});
