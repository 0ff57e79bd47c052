import { trayItemInput } from "@/lib/schemas/records";
import { conflict } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { page, pageQuery, route } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { getTrayRow, listTray, trayToApi } from "@/db/queries/garage";

export const GET = route({ response: answers.tray, query: pageQuery }, async ({ user, query }) =>
  page(await listTray(user.id, query.limit, query.offset), query.limit, query.offset),
);

export const POST = route({ response: answers.trayItem, body: trayItemInput, status: 201 }, async ({ user, body }) => ({
  item: await write(user, async (w) => {
    const id = body.id ?? crypto.randomUUID();
    if (body.id && (await getTrayRow(w.tx, id))) throw conflict("A tray item with this id exists already");
    await apply(w, "tray.put/1", { ...body, id });
    return trayToApi((await getTrayRow(w.tx, id))!);
  }),
}));
