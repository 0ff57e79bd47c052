import { z } from "zod";
import { trayItemUpdate } from "@/lib/schemas/records";
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
      const defined = Object.fromEntries(Object.entries(body).filter(([, v]) => v !== undefined));
      await apply(w, "tray.put/1", {
        id: t.id,
        size: t.size,
        measuredSize: t.measuredSize,
        count: t.count,
        shimDiameter: t.shimDiameter,
        ...defined,
      });
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
