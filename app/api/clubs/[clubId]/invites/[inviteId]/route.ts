import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { withdrawInvitation } from "@/server/clubs";
import { write } from "@/server/write";

const params = z.object({ clubId: uuidParam, inviteId: uuidParam });

/** An admin withdraws a pending invitation: its link stops working at once. */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, (w) => withdrawInvitation(w, params.clubId, params.inviteId));
});
