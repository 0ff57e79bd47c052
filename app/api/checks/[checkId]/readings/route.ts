import { z } from "zod";
import { readingsPut } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { readableCheck } from "@/server/access";
import { applyRun } from "@/server/appliers";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { listReadings } from "@/db/queries/garage";

const params = z.object({ checkId: uuidParam });

export const GET = route({ response: answers.readings, params }, async ({ user, params }) => {
  await readableCheck(db(), user, params.checkId);
  return { readings: await listReadings(db(), params.checkId) };
});

/** Create or replace readings by (valve, round); a mentor may read them but never write them. */
export const PUT = route({ response: answers.readings, params, body: readingsPut }, async ({ user, params, body }) => ({
  readings: await write(user, async (w) => {
    await applyRun(
      w,
      "reading.put/1",
      body.readings.map((reading) => ({ checkId: params.checkId, reading })),
    );
    return listReadings(w.tx, params.checkId);
  }),
}));
