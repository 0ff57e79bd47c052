import { signUpInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { clientAddress } from "@/server/throttle";
import { signUp } from "@/server/account";

export const POST = route(
  { response: answers.accepted, auth: false, body: signUpInput, status: 202 },
  async ({ body, req }) => {
    await signUp(body, clientAddress(req.headers));
    return { ok: true, message: "Check your inbox for a link to confirm your address." };
  },
);
