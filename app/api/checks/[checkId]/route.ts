import { z } from "zod";
import { checkUpdate } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { ownCheck, readableCheck } from "@/server/access";
import { checkToApi, deleteCheck, engineToApi, getEngineRow, updateCheck } from "@/db/queries/garage";

const params = z.object({ checkId: uuidParam });

/** The check with its engine: the owner and the mentors of a club it is shared with may read it. */
export const GET = route({ params }, async ({ user, params }) => {
  const a = await readableCheck(user, params.checkId);
  return { check: checkToApi(a.check), engine: engineToApi((await getEngineRow(a.check.engineId))!), access: a.as };
});

export const PATCH = route({ params, body: checkUpdate }, async ({ user, params, body }) => {
  await ownCheck(user, params.checkId);
  return { check: await updateCheck(params.checkId, body) };
});

export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await ownCheck(user, params.checkId);
  await deleteCheck(user.id, params.checkId);
});
