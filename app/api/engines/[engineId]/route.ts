import { z } from "zod";
import { engineUpdate } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { ownEngine } from "@/server/access";
import { mergeEngine } from "@/server/engines";
import { deleteEngine, engineToApi, updateEngine } from "@/db/queries/garage";

const params = z.object({ engineId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => ({ engine: engineToApi(await ownEngine(user, params.engineId)) }));

export const PATCH = route({ params, body: engineUpdate.omit({ id: true }) }, async ({ user, params, body }) => {
  const row = await ownEngine(user, params.engineId);
  return { engine: await updateEngine(user.id, row.id, mergeEngine(row, body)) };
});

export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await ownEngine(user, params.engineId);
  await deleteEngine(user.id, params.engineId);
});
