import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";

const params = z.object({ offerId: uuidParam });

/** The owner takes an offer back; open requests on it are declined. */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, (w) => apply(w, "pool.withdraw/1", { id: params.offerId }));
});
