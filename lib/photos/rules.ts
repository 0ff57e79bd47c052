import { z } from "zod";
import { idSchema, valveKey } from "../schemas/records";

/**
 * Photo rules shared by the phone and the server: what may be sent, how large, and the fields
 * that go with a photo. The server checks the content itself (server/photos.ts); these limits are
 * the ones the screens state.
 */
export const PHOTO_MAX_BYTES = 10 * 1024 * 1024;
export const PHOTO_MAX_LABEL = "10 MB";
/** the longest side a stored photo keeps: enough to read a shim's stamp */
export const PHOTO_MAX_EDGE = 1600;
/** formats accepted, judged by content */
export const PHOTO_FORMATS = ["jpeg", "png", "webp"] as const;

export const photoFields = z.object({
  id: idSchema,
  valve: valveKey.nullable().optional(),
  commentId: idSchema.nullable().optional(),
});
export type PhotoFields = z.infer<typeof photoFields>;

export interface ApiPhoto {
  id: string;
  checkId: string;
  valve: string | null;
  commentId: string | null;
  width: number | null;
  height: number | null;
  bytes: number;
  uploaderId: string;
  uploaderName: string;
  createdAt: string;
}

export const photoUrl = (id: string) => `/api/photos/${id}`;
