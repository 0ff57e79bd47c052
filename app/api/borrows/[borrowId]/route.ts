import { z } from "zod";
import { borrowMoveInput } from "@/lib/pool/rules";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { listBorrows } from "@/db/queries/pool";

const params = z.object({ borrowId: uuidParam });

/** One step of a loan: agree, decline, withdraw, hand over, give back, settle. */
export const PUT = route(
  { response: answers.borrow, params, body: borrowMoveInput },
  async ({ user, params, body }) => {
    await write(user, (w) => apply(w, "borrow.move/1", { ...body, id: params.borrowId }));
    return { borrow: (await listBorrows(user.id)).find((b) => b.id === params.borrowId) };
  },
);
