import { z } from "zod";
import { verdictInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { getShare, shareToApi } from "@/db/queries/clubs";

const params = z.object({ shareId: uuidParam });

export const PUT = route({ response: answers.share, params, body: verdictInput }, async ({ user, params, body }) => ({
  share: await write(user, async (w) => {
    await apply(w, "verdict.set/1", { shareId: params.shareId, verdict: body.verdict });
    return shareToApi((await getShare(w.tx, params.shareId))!);
  }),
}));
