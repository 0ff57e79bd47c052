import { z } from "zod";
import { route, uuidParam } from "@/server/http";
import { applyWithdrawOffer, run } from "@/server/pool";

const params = z.object({ offerId: uuidParam });

/** The owner takes an offer back; open requests on it are declined. */
export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await run((tx, version) => applyWithdrawOffer(tx, version, user, params.offerId));
});
