import { z } from "zod";
import { offerInput } from "@/lib/pool/rules";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubPool } from "@/server/pool";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { getOffer } from "@/db/queries/pool";

const params = z.object({ clubId: uuidParam });

/** The club's pool of spare shims, for its members only. */
export const GET = route({ response: answers.pool, params }, async ({ user, params }) => ({
  items: await clubPool(user, params.clubId),
}));

export const POST = route(
  { response: answers.offer, params, body: offerInput.omit({ clubId: true }), status: 201 },
  async ({ user, params, body }) => ({
    offer: await write(user, async (w) => {
      const id = body.id ?? crypto.randomUUID();
      await apply(w, "pool.offer/1", { ...body, id, clubId: params.clubId });
      return (await getOffer(w.tx, id))!;
    }),
  }),
);
