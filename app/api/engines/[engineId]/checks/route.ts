import { z } from "zod";
import { checkInput } from "@/lib/schemas/records";
import { conflict, page, pageQuery, route, uuidParam } from "@/server/http";
import { ownEngine } from "@/server/access";
import { createCheck, getCheckRow, listChecks } from "@/db/queries/garage";

const params = z.object({ engineId: uuidParam });

export const GET = route({ params, query: pageQuery }, async ({ user, params, query }) => {
  await ownEngine(user, params.engineId);
  return page(await listChecks(params.engineId, query.limit, query.offset), query.limit, query.offset);
});

export const POST = route({ params, body: checkInput, status: 201 }, async ({ user, params, body }) => {
  await ownEngine(user, params.engineId);
  if (body.id && (await getCheckRow(body.id))) throw conflict("A check with this id exists already");
  return { check: await createCheck(user.id, params.engineId, body) };
});
