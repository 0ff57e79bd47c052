import { emailOnlyInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { resendVerification } from "@/server/account";

export const POST = route(
  { response: answers.accepted, auth: false, body: emailOnlyInput, status: 202 },
  async ({ body }) => {
    await resendVerification(body.email);
    return { ok: true, message: "If that address has an account waiting for confirmation, a new link is on its way." };
  },
);
