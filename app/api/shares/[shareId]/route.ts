import { z } from "zod";
import { route, uuidParam } from "@/server/http";
import { withdrawShare } from "@/server/clubs";
import { write } from "@/server/write";

const params = z.object({ shareId: uuidParam });

/** Withdraw a share: the club's mentors lose access at once. */
export const DELETE = route({ params, status: 204 }, async ({ user, params }) => {
  await write(user, (w) => withdrawShare(w, params.shareId));
});
