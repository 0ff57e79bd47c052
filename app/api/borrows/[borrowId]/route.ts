import { z } from "zod";
import { borrowMoveInput } from "@/lib/pool/rules";
import { route, uuidParam } from "@/server/http";
import { applyMove, run } from "@/server/pool";
import { listBorrows } from "@/db/queries/pool";

const params = z.object({ borrowId: uuidParam });

/** One step of a loan: agree, decline, withdraw, hand over, give back, settle. */
export const PUT = route({ params, body: borrowMoveInput }, async ({ user, params, body }) => {
  await run((tx, version) => applyMove(tx, version, user, { id: params.borrowId, ...body }));
  return { borrow: (await listBorrows(user.id)).find((b) => b.id === params.borrowId) };
});
