import { z } from "zod";
import { notFound } from "@/lib/errors";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { write } from "@/server/write";
import { withdrawInvite } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam, inviteId: uuidParam });

/** An admin withdraws a pending invitation: its link stops working at once. */
export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await write(user, async (w) => {
    await clubRole(w.tx, user, params.clubId, "admin");
    if (!(await withdrawInvite(w.tx, params.clubId, params.inviteId, user.id))) throw notFound("pending invitation");
  });
});
