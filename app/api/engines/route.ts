import { engineInput } from "@/lib/schemas/records";
import { conflict } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { page, pageQuery, route } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { engineToApi, getEngineRow, listEngines } from "@/db/queries/garage";

export const GET = route({ response: answers.engines, query: pageQuery }, async ({ user, query }) =>
  page(await listEngines(user.id, query.limit, query.offset), query.limit, query.offset),
);

export const POST = route({ response: answers.engine, body: engineInput, status: 201 }, async ({ user, body }) => ({
  engine: await write(user, async (w) => {
    const id = body.id ?? crypto.randomUUID();
    if (body.id && (await getEngineRow(w.tx, id))) throw conflict("An engine with this id exists already");
    await apply(w, "engine.put/2", { ...body, id, shimPosition: body.shimPosition ?? null });
    return engineToApi((await getEngineRow(w.tx, id))!);
  }),
}));
