import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { photoBytes, removePhoto } from "@/server/photos";

const params = z.object({ photoId: uuidParam });

/** The stored image, for whoever may read its check. Its bytes never change, so it may be kept. */
export const GET = route({ response: answers.notJson, params }, async ({ user, params }) => {
  const { row, bytes } = await photoBytes(user, params.photoId);
  return new Response(bytes as BodyInit, {
    headers: {
      "Content-Type": row.contentType,
      "Content-Length": String(bytes.byteLength),
      "Cache-Control": "private, max-age=31536000, immutable",
      "X-Content-Type-Options": "nosniff",
    },
  });
});

export const DELETE = route({ response: answers.noContent, params, status: 204 }, async ({ user, params }) => {
  await removePhoto(user, params.photoId);
});
