import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { page, pageQuery, route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { db } from "@/db/connection";
import { listClubLog } from "@/db/queries/clubs";

const params = z.object({ clubId: uuidParam });

/** The club's log of role changes and invitations, for its admins only. */
export const GET = route({ response: answers.clubLog, params, query: pageQuery }, async ({ user, params, query }) => {
  await clubRole(db(), user, params.clubId, "admin");
  return page(await listClubLog(params.clubId, query.limit, query.offset), query.limit, query.offset);
});
