import { emailOnlyInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { clientAddress } from "@/server/throttle";
import { requestPasswordReset } from "@/server/account";

export const POST = route(
  { response: answers.accepted, auth: false, body: emailOnlyInput, status: 202 },
  async ({ body, req }) => {
    await requestPasswordReset(body.email, clientAddress(req.headers));
    return { ok: true, message: "If that address has an account, a link is on its way." };
  },
);
