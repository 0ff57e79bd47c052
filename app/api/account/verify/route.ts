import { tokenInput } from "@/lib/schemas/account";
import { ApiError, route } from "@/server/http";
import { verifyEmail } from "@/server/account";

export const POST = route({ auth: false, body: tokenInput }, async ({ body }) => {
  if (!(await verifyEmail(body.token))) throw new ApiError(400, "bad_token", "This link has expired or was already used");
  return { ok: true };
});
