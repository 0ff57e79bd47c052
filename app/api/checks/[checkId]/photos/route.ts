import { NextResponse } from "next/server";
import { z } from "zod";
import { answers } from "@/lib/api/contract";
import { route, uuidParam } from "@/server/http";
import { readableCheck } from "@/server/access";
import { uploadPhoto } from "@/server/photos";
import { readForm } from "@/server/request-guard";
import { listPhotos } from "@/db/queries/photos";
import { db } from "@/db/connection";

const params = z.object({ checkId: uuidParam });

export const GET = route({ response: answers.photos, params }, async ({ user, params }) => {
  await readableCheck(db(), user, params.checkId);
  return { items: await listPhotos(params.checkId) };
});

/** A multipart form: file, id (the phone's own uuid, so a retry is harmless), valve?, commentId?. */
export const POST = route({ response: answers.photoUploaded, params }, async ({ user, params, req }) => {
  const { photo, created, usage } = await uploadPhoto(user, params.checkId, {
    bytes: Number(req.headers.get("content-length") ?? 0),
    read: (limit) => readForm(req, limit),
  });
  return NextResponse.json({ photo, usage }, { status: created ? 201 : 200 });
});
