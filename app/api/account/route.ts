import { settingsInput } from "@/lib/schemas/account";
import { answers } from "@/lib/api/contract";
import { route } from "@/server/http";
import { getPublicUser } from "@/db/queries/users";
import { changeSettings } from "@/server/account-changes";
import { NextResponse } from "next/server";
import { deleteAccountInput } from "@/lib/account/deletion";
import { deleteAccount } from "@/server/account-deletion";
import { sessionCookieName } from "@/server/auth";

export const GET = route({ response: answers.accountGet }, async ({ user }) => ({ user }));

export const PATCH = route({ response: answers.accountPatch, body: settingsInput }, async ({ user, body }) => {
  await changeSettings(user.id, body);
  return { user: (await getPublicUser(user.id))! };
});

/**
 * Delete the account and everything that is its own (server/account-deletion.ts), proved by the
 * password or a mailed link; the answer also clears this browser's session cookie.
 */
export const DELETE = route({ response: answers.accountDelete, body: deleteAccountInput }, async ({ user, body }) => {
  const done = await deleteAccount(user, body);
  const res = NextResponse.json({ deleted: true, ...done });
  res.cookies.delete(sessionCookieName());
  return res;
});
