import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { clubMember } from "@/server/access";
import { listMembers } from "@/db/queries/clubs";
import { db } from "@/db/connection";

const params = z.object({ clubId: uuidParam });

/** Members see who is in their club and their roles (names and e-mails, nothing else). */
export const GET = route({ response: answers.members, params }, async ({ user, params }) => {
  await clubMember(db(), user, params.clubId);
  return { items: await listMembers(db(), params.clubId) };
});
