import { z } from "zod";
import { commentInput } from "@/lib/schemas/records";
import { route, uuidParam } from "@/server/http";
import { readableCheck } from "@/server/access";
import { noticeNewComment } from "@/server/review";
import { addComment, listComments } from "@/db/queries/clubs";

const params = z.object({ checkId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  await readableCheck(user, params.checkId);
  return { items: await listComments(params.checkId) };
});

/** The owner and the mentors of a sharing club comment on the check or on one valve. */
export const POST = route({ params, body: commentInput, status: 201 }, async ({ user, params, body }) => {
  const a = await readableCheck(user, params.checkId);
  const comment = await addComment(params.checkId, user.id, body);
  await noticeNewComment(a.check, user, body.body);
  return { comment: { id: comment.id, checkId: comment.checkId, valve: comment.valve, body: comment.body, createdAt: comment.createdAt, authorId: user.id, authorName: user.name } };
});
