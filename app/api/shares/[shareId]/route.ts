import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { withdrawShare } from "@/server/clubs";
import { write } from "@/server/write";

const params = z.object({ shareId: uuidParam });

/** Withdraw a share: the club's mentors lose access at once. */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, (w) => withdrawShare(w, params.shareId));
});
