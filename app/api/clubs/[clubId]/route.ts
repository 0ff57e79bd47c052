import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubMember } from "@/server/access";
import { getClub } from "@/db/queries/clubs";
import { db } from "@/db/connection";

const params = z.object({ clubId: uuidParam });

export const GET = route({ response: answers.club, params }, async ({ user, params }) => {
  const roles = await clubMember(db(), user, params.clubId);
  return { club: { ...(await getClub(db(), params.clubId))!, roles } };
});
