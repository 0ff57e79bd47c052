import { settingsInput } from "@/lib/schemas/account";
import { route } from "@/server/http";
import { getPublicUser, updateUser } from "@/db/queries/users";

export const GET = route({}, async ({ user }) => ({ user }));

export const PATCH = route({ body: settingsInput }, async ({ user, body }) => {
  await updateUser(user.id, body);
  return { user: await getPublicUser(user.id) };
});
