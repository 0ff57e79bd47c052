import { tokenInput } from "@/lib/schemas/account";
import { DomainError } from "@/lib/errors";
import { route } from "@/server/http";
import { verifyEmail } from "@/server/account";

export const POST = route({ auth: false, body: tokenInput }, async ({ body }) => {
  if (!(await verifyEmail(body.token))) throw new DomainError("bad_request", "This link has expired or was already used", { code: "bad_token" });
  return { ok: true };
});
