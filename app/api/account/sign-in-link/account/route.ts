import { tokenInput } from "@/lib/schemas/account";
import { DomainError } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { linkAccount } from "@/server/account";

/** Whose a sign-in link is, without using it: the link page names the account on its button. */
export const POST = route({ response: answers.linkAccount, auth: false, body: tokenInput }, async ({ body }) => {
  const account = await linkAccount(body.token);
  if (!account)
    throw new DomainError("bad_request", "This link has expired or was already used", { code: "bad_token" });
  return { account };
});
