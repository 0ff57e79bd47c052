import { trayItemInput } from "@/lib/schemas/records";
import { conflict, page, pageQuery, route } from "@/server/http";
import { createTrayItem, getTrayRow, listTray } from "@/db/queries/garage";

export const GET = route({ query: pageQuery }, async ({ user, query }) => page(await listTray(user.id, query.limit, query.offset), query.limit, query.offset));

export const POST = route({ body: trayItemInput, status: 201 }, async ({ user, body }) => {
  if (body.id && (await getTrayRow(body.id))) throw conflict("A tray item with this id exists already");
  return { item: await createTrayItem(user.id, body) };
});
