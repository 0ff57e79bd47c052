import { engineInput } from "@/lib/schemas/records";
import { conflict, page, pageQuery, route } from "@/server/http";
import { createEngine, getEngineRow, listEngines } from "@/db/queries/garage";

export const GET = route({ query: pageQuery }, async ({ user, query }) => page(await listEngines(user.id, query.limit, query.offset), query.limit, query.offset));

export const POST = route({ body: engineInput, status: 201 }, async ({ user, body }) => {
  if (body.id && (await getEngineRow(body.id))) throw conflict("An engine with this id exists already");
  return { engine: await createEngine(user.id, body) };
});
