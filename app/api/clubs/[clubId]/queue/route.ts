import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { page, pageQuery, route, uuidParam } from "@/server/http";
import { clubRole } from "@/server/access";
import { reviewQueue } from "@/db/queries/clubs";
import { db } from "@/db/connection";

const params = z.object({ clubId: uuidParam });

/** Checks shared with the club, newest first: the mentors' review queue. */
export const GET = route({ response: answers.queue, params, query: pageQuery }, async ({ user, params, query }) => {
  await clubRole(db(), user, params.clubId, "mentor");
  return page(await reviewQueue(params.clubId, query.limit, query.offset), query.limit, query.offset);
});
