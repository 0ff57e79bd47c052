import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { shareFor } from "@/server/access";
import { write } from "@/server/write";
import { withdrawShare } from "@/db/queries/clubs";

const params = z.object({ shareId: uuidParam });

/** Withdraw a share: the club's mentors lose access at once. */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await shareFor(w.tx, user, params.shareId, "owner");
    await withdrawShare(w.tx, w.version, params.shareId);
  });
});
