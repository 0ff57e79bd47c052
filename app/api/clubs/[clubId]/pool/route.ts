import { z } from "zod";
import { offerInput } from "@/lib/pool/rules";
import { route, uuidParam } from "@/server/http";
import { applyOffer, clubPool, run } from "@/server/pool";
import { getOffer } from "@/db/queries/pool";

const params = z.object({ clubId: uuidParam });

/** The club's pool of spare shims, for its members only. */
export const GET = route({ params }, async ({ user, params }) => ({ items: await clubPool(user, params.clubId) }));

export const POST = route({ params, body: offerInput.omit({ clubId: true }), status: 201 }, async ({ user, params, body }) => {
  const id = body.id ?? crypto.randomUUID();
  await run((tx, version) => applyOffer(tx, version, user, { ...body, id, clubId: params.clubId }));
  return { offer: await getOffer(id) };
});
