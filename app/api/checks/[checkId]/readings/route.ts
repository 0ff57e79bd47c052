import { z } from "zod";
import { readingsPut } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { ownCheck, readableCheck } from "@/server/access";
import { checkReadingsFit } from "@/server/engines";
import { getEngineRow, listReadings, upsertReadings } from "@/db/queries/garage";

const params = z.object({ checkId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  await readableCheck(user, params.checkId);
  return { readings: await listReadings(params.checkId) };
});

/** Create or replace readings by (valve, round); a mentor may read them but never write them. */
export const PUT = route({ params, body: readingsPut }, async ({ user, params, body }) => {
  const check = await ownCheck(user, params.checkId);
  checkReadingsFit((await getEngineRow(check.engineId))!, body.readings);
  return { readings: await upsertReadings(user.id, params.checkId, body.readings) };
});
