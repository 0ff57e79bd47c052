import { z } from "zod";
import { CHECK_PLAIN_FIELDS, checkUpdate } from "@/lib/schemas/records";
import { definedOnly, pick } from "@/lib/pick";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { ownCheck, readableCheck } from "@/server/access";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { checkToApi, engineToApi, getCheckRow, getEngineRow } from "@/db/queries/garage";

const params = z.object({ checkId: uuidParam });

/** The check with its engine: the owner and the mentors of a club it is shared with may read it. */
export const GET = route({ response: answers.checkView, params }, async ({ user, params }) => {
  const a = await readableCheck(db(), user, params.checkId);
  return {
    check: checkToApi(a.check),
    engine: engineToApi((await getEngineRow(db(), a.check.engineId))!),
    access: a.as,
  };
});

/** A partial change, merged with the stored check and written as a whole, as a phone does. */
export const PATCH = route({ response: answers.check, params, body: checkUpdate }, async ({ user, params, body }) => ({
  check: await write(user, async (w) => {
    const c = await ownCheck(w.tx, user, params.checkId);
    await apply(w, "check.put/1", { ...pick(c, CHECK_PLAIN_FIELDS), ...definedOnly(body) });
    return checkToApi((await getCheckRow(w.tx, c.id))!);
  }),
}));

export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await ownCheck(w.tx, user, params.checkId);
    await apply(w, "check.delete/1", { id: params.checkId });
  });
});
