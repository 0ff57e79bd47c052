import { newPasswordInput } from "@/lib/schemas/account";
import { ApiError, route } from "@/server/http";
import { resetPassword } from "@/server/account";

export const POST = route({ auth: false, body: newPasswordInput }, async ({ body }) => {
  if (!(await resetPassword(body.token, body.password))) throw new ApiError(400, "bad_token", "This link has expired or was already used");
  return { ok: true };
});
