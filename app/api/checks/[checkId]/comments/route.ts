import { z } from "zod";
import { commentInput } from "@/lib/schemas/records";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { readableCheck, visibleComments } from "@/server/access";
import { apply } from "@/server/appliers";
import { write } from "@/server/write";
import { db } from "@/db/connection";
import { listComments } from "@/db/queries/clubs";

const params = z.object({ checkId: uuidParam });

export const GET = route({ response: answers.comments, params }, async ({ user, params }) => {
  const a = await readableCheck(db(), user, params.checkId);
  // a check shared with several clubs: each club's mentors read their own thread and the owner's words
  return {
    items: visibleComments(a, user, await listComments(db(), params.checkId)).map(
      ({ id, checkId, valve, body, createdAt, authorId, authorName }) => ({
        id,
        checkId,
        valve,
        body,
        createdAt,
        authorId,
        authorName,
      }),
    ),
  };
});

/** The owner and the mentors of a sharing club comment on the check or on one valve. */
export const POST = route(
  { response: answers.comment, params, body: commentInput, status: 201 },
  async ({ user, params, body }) => {
    const id = body.id ?? crypto.randomUUID();
    const comment = await write(user, async (w) => {
      await apply(w, "comment.add/1", { ...body, id, checkId: params.checkId });
      return (await listComments(w.tx, params.checkId)).find((c) => c.id === id)!;
    });
    return {
      comment: {
        id: comment.id,
        checkId: comment.checkId,
        valve: comment.valve,
        body: comment.body,
        createdAt: comment.createdAt,
        authorId: comment.authorId,
        authorName: comment.authorName,
      },
    };
  },
);
