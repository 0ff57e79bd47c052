import { newPasswordInput } from "@/lib/schemas/account";
import { DomainError } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { resetPassword } from "@/server/account";

export const POST = route({ response: answers.ok, auth: false, body: newPasswordInput }, async ({ body }) => {
  if (!(await resetPassword(body.token, body.password)))
    throw new DomainError("bad_request", "This link has expired or was already used", { code: "bad_token" });
  return { ok: true };
});
