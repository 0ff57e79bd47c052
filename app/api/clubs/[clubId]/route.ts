import { z } from "zod";
import { route, uuidParam } from "@/server/http";
import { clubMember } from "@/server/access";
import { getClub } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  const roles = await clubMember(user, params.clubId);
  return { club: { ...(await getClub(params.clubId))!, roles } };
});
