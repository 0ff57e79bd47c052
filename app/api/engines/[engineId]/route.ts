import { z } from "zod";
import { engineUpdate } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { ownEngine } from "@/server/access";
import { mergeEngine } from "@/server/engines";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { engineToApi, getEngineRow } from "@/db/queries/garage";

const params = z.object({ engineId: uuidParam });

export const GET = route({ response: answers.engine, params }, async ({ user, params }) => ({
  engine: engineToApi(await ownEngine(db(), user, params.engineId)),
}));

export const PATCH = route(
  { response: answers.engine, params, body: engineUpdate.omit({ id: true }) },
  async ({ user, params, body }) => ({
    engine: await write(user, async (w) => {
      const row = await ownEngine(w.tx, user, params.engineId);
      const merged = mergeEngine(row, body);
      await apply(w, "engine.put/2", { ...merged, id: row.id, shimPosition: merged.shimPosition ?? null });
      return engineToApi((await getEngineRow(w.tx, row.id))!);
    }),
  }),
);

export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await ownEngine(w.tx, user, params.engineId);
    await apply(w, "engine.delete/1", { id: params.engineId });
  });
});
