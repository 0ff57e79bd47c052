import { z } from "zod";
import type { Answer, photoRecord, photoUsage } from "../api/contract";
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
/**
 * The most pixels a sent picture may have, read from its header before anything is decoded: a
 * small file can unpack to a huge picture (a 146 KB PNG of 7071 x 7071 is 50 million pixels, 150 MB
 * decoded). 25 million takes a 24-megapixel camera's full frame; the phone shrinks its own photos to
 * PHOTO_MAX_EDGE before they are queued, so only a picture it could not read comes this large.
 */
export const PHOTO_MAX_PIXELS = 25_000_000;
export const PHOTO_MAX_PIXELS_LABEL = "25 megapixels";
/** formats accepted, judged by content */
export const PHOTO_FORMATS = ["jpeg", "png", "webp"] as const;

export const photoFields = z.object({
  id: idSchema,
  valve: valveKey.nullable().optional(),
  commentId: idSchema.nullable().optional(),
});
export type PhotoFields = z.infer<typeof photoFields>;

export type ApiPhoto = Answer<typeof photoRecord>;

export const photoUrl = (id: string) => `/api/photos/${id}`;

/** The error code of an upload refused because the account's photo space is full. */
export const PHOTO_QUOTA_CODE = "photo_quota";

/** How much photo space an account uses (every photo it sent, counted from the stored sizes) of how much. */
export type PhotoUsage = Answer<typeof photoUsage>;

/** "310 KB", "12.4 MB", "1 GB": sizes as the screens and messages say them (1 MB = 1024 KB). */
export function formatBytes(n: number): string {
  const units = ["bytes", "KB", "MB", "GB"];
  let v = Math.max(0, n);
  let u = 0;
  while (v >= 1024 && u < units.length - 1) {
    v /= 1024;
    u++;
  }
  if (u === 0) return `${Math.round(v)} bytes`;
  const shown = v >= 100 || Number.isInteger(v) ? Math.round(v).toString() : v.toFixed(1).replace(/\.0$/, "");
  return `${shown} ${units[u]}`;
}

/** "12.4 MB of 500 MB used" */
export const usageLabel = (u: PhotoUsage) => `${formatBytes(u.usedBytes)} of ${formatBytes(u.quotaBytes)} used`;
