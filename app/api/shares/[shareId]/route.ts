import { z } from "zod";
import { route, uuidParam } from "@/server/http";
import { shareFor } from "@/server/access";
import { withdrawShare } from "@/db/queries/clubs";

const params = z.object({ shareId: uuidParam });

/** Withdraw a share: the club's mentors lose access at once. */
export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await shareFor(user, params.shareId, "owner");
  await withdrawShare(params.shareId);
});
