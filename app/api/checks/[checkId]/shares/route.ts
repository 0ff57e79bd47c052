import { z } from "zod";
import { shareInput } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { clubMember, ownCheck, readableCheck } from "@/server/access";
import { noticeReviewRequested } from "@/server/review";
import { listSharesOfCheck, shareCheck } from "@/db/queries/clubs";

const params = z.object({ checkId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  const a = await readableCheck(user, params.checkId);
  const all = await listSharesOfCheck(params.checkId);
  // a mentor sees only the shares with their own clubs
  return { items: a.as === "owner" ? all : all.filter((s) => a.mentorShares.some((m) => m.shareId === s.id)) };
});

export const POST = route({ params, body: shareInput, status: 201 }, async ({ user, params, body }) => {
  const check = await ownCheck(user, params.checkId);
  await clubMember(user, body.clubId);
  const share = await shareCheck(params.checkId, body.clubId, user.id);
  await noticeReviewRequested(check, body.clubId, user.name);
  return { share };
});
