import { PHOTO_MAX_EDGE } from "./rules";

/**
 * Shrink a photo on the phone before it is queued: a garage signal is slow and IndexedDB space is
 * finite. Re-drawing also drops the camera's metadata. Anything the browser cannot decode is kept
 * as it is, and the server (which checks every upload itself) gives the reason.
 */
export async function shrinkPhoto(file: Blob, maxEdge = PHOTO_MAX_EDGE): Promise<Blob> {
  if (typeof createImageBitmap !== "function" || typeof OffscreenCanvas === "undefined") return file;
  try {
    const bmp = await createImageBitmap(file, { imageOrientation: "from-image" });
    const scale = Math.min(1, maxEdge / Math.max(bmp.width, bmp.height));
    const w = Math.max(1, Math.round(bmp.width * scale));
    const h = Math.max(1, Math.round(bmp.height * scale));
    const canvas = new OffscreenCanvas(w, h);
    canvas.getContext("2d")!.drawImage(bmp, 0, 0, w, h);
    bmp.close();
    return await canvas.convertToBlob({ type: "image/jpeg", quality: 0.85 });
  } catch {
    return file;
  }
}
