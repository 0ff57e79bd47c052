import { z } from "zod";
import { trayItemUpdate } from "@/lib/schemas/records";
import { definedOnly, pick } from "@/lib/pick";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { ownTrayItem } from "@/server/access";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { getTrayRow, trayToApi } from "@/db/queries/garage";

const params = z.object({ itemId: uuidParam });

export const PATCH = route(
  { response: answers.trayItem, params, body: trayItemUpdate },
  async ({ user, params, body }) => ({
    item: await write(user, async (w) => {
      const t = await ownTrayItem(w.tx, user, params.itemId);
      const stored = pick(t, ["id", "size", "measuredSize", "count", "shimDiameter"]);
      await apply(w, "tray.put/1", { ...stored, ...definedOnly(body) });
      return trayToApi((await getTrayRow(w.tx, t.id))!);
    }),
  }),
);

export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await ownTrayItem(w.tx, user, params.itemId);
    await apply(w, "tray.delete/1", { id: params.itemId });
  });
});
