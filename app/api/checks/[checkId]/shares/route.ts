import { z } from "zod";
import { shareInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { readableCheck } from "@/server/access";
import { shareCheck } from "@/server/clubs";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { listSharesOfCheck } from "@/db/queries/clubs";

const params = z.object({ checkId: uuidParam });

export const GET = route({ response: answers.shares, params }, async ({ user, params }) => {
  const a = await readableCheck(db(), user, params.checkId);
  const all = await listSharesOfCheck(params.checkId);
  // a mentor sees only the shares with their own clubs
  return { items: a.as === "owner" ? all : all.filter((s) => a.mentorShares.some((m) => m.shareId === s.id)) };
});

/** Sharing is a REST write only (phones share while online): authorised in its own transaction. */
export const POST = route(
  { response: answers.share, params, body: shareInput, status: 201 },
  async ({ user, params, body }) => ({
    share: await write(user, (w) => shareCheck(w, params.checkId, body.clubId)),
  }),
);
