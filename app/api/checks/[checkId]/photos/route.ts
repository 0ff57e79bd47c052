import { NextResponse } from "next/server";
import { z } from "zod";
import { PHOTO_MAX_BYTES } from "@/lib/photos/rules";
import { ApiError, route, uuidParam } from "@/server/http";
import { readableCheck } from "@/server/access";
import { tooLarge, uploadPhoto } from "@/server/photos";
import { listPhotos } from "@/db/queries/photos";

const params = z.object({ checkId: uuidParam });

export const GET = route({ params }, async ({ user, params }) => {
  await readableCheck(user, params.checkId);
  return { items: await listPhotos(params.checkId) };
});

/** A multipart form: file, id (the phone's own uuid, so a retry is harmless), valve?, commentId?. */
export const POST = route({ params }, async ({ user, params, req }) => {
  // a check the caller cannot read answers 404 whatever was sent
  await readableCheck(user, params.checkId);
  // refuse an oversized body before reading it (a little room for the form's other fields)
  if (Number(req.headers.get("content-length") ?? 0) > PHOTO_MAX_BYTES + 64 * 1024) throw tooLarge();
  let form: FormData;
  try {
    form = await req.formData();
  } catch {
    throw new ApiError(400, "bad_form", "Send the photo as a multipart form");
  }
  const { photo, created } = await uploadPhoto(user, params.checkId, form);
  return NextResponse.json({ photo }, { status: created ? 201 : 200 });
});
