import { z } from "zod";
import { checkInput } from "@/lib/schemas/records";
import { conflict } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { page, pageQuery, route, uuidParam } from "@/server/http";
import { ownEngine } from "@/server/access";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { checkToApi, getCheckRow, listChecks } from "@/db/queries/garage";

const params = z.object({ engineId: uuidParam });

export const GET = route({ response: answers.checks, params, query: pageQuery }, async ({ user, params, query }) => {
  await ownEngine(db(), user, params.engineId);
  return page(await listChecks(params.engineId, query.limit, query.offset), query.limit, query.offset);
});

export const POST = route(
  { response: answers.check, params, body: checkInput, status: 201 },
  async ({ user, params, body }) => ({
    check: await write(user, async (w) => {
      const id = body.id ?? crypto.randomUUID();
      await ownEngine(w.tx, user, params.engineId);
      if (body.id && (await getCheckRow(w.tx, id))) throw conflict("A check with this id exists already");
      await apply(w, "check.put/1", { ...body, id, engineId: params.engineId, status: "measuring" });
      return checkToApi((await getCheckRow(w.tx, id))!);
    }),
  }),
);
