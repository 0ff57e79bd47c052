import { z } from "zod";
import { verdictInput } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { shareFor } from "@/server/access";
import { noticeVerdict } from "@/server/review";
import { setVerdict } from "@/db/queries/clubs";

const params = z.object({ shareId: uuidParam });

export const PUT = route({ params, body: verdictInput }, async ({ user, params, body }) => {
  const { check } = await shareFor(user, params.shareId, "mentor");
  const share = await setVerdict(params.shareId, user.id, body.verdict);
  await noticeVerdict(check, user.name, body.verdict);
  return { share };
});
