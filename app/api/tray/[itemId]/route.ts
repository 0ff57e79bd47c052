import { z } from "zod";
import { trayItemUpdate } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { ownTrayItem } from "@/server/access";
import { deleteTrayItem, updateTrayItem } from "@/db/queries/garage";

const params = z.object({ itemId: uuidParam });

export const PATCH = route({ params, body: trayItemUpdate }, async ({ user, params, body }) => {
  await ownTrayItem(user, params.itemId);
  return { item: await updateTrayItem(params.itemId, body) };
});

export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await ownTrayItem(user, params.itemId);
  await deleteTrayItem(user.id, params.itemId);
});
