import "server-only";
import sharp from "sharp";
import {
  PHOTO_FORMATS,
  PHOTO_MAX_BYTES,
  PHOTO_MAX_EDGE,
  PHOTO_MAX_LABEL,
  PHOTO_MAX_PIXELS,
  PHOTO_MAX_PIXELS_LABEL,
} from "@/lib/photos/rules";
import { DomainError, overloaded } from "@/lib/errors";
import { env } from "@/lib/env";
import { Slots, watchSlots } from "./slots";

export { Slots };

/**
 * Decoding a sent picture is the costliest thing an upload does (memory in proportion to its
 * pixels, and a thread of libuv's pool, which password hashing shares), so it is bounded three
 * ways: the header's dimensions are read first and a picture over PHOTO_MAX_PIXELS is refused before
 * a single pixel is decoded (OWASP ASVS 5.0 5.2.6, pixel flood); sharp's own limitInputPixels stands
 * behind that; and only a few decodes run at once per process, with a short queue (5.2.1: only what
 * can be processed without a loss of performance).
 */
export const tooLarge = () => new DomainError("too_large", `A photo may be at most ${PHOTO_MAX_LABEL}`);
const notAPhoto = (message = "That file is not a JPEG, PNG or WebP picture") =>
  new DomainError("unsupported", message, { code: "not_a_photo" });
const tooManyPixels = (w?: number, h?: number) =>
  new DomainError(
    "too_large",
    `A photo may have at most ${PHOTO_MAX_PIXELS_LABEL}${w && h ? `; this one is ${w} × ${h}` : ""}. Send a smaller copy.`,
    { code: "too_many_pixels" },
  );

/** How much decoding this process has done: tests count work with it, never time. */
export const decodeStats = { decodes: 0, refusedByHeader: 0 };

let slots: Slots | undefined;
/** The process's decode slots, sized by PHOTO_DECODE_SLOTS and PHOTO_DECODE_QUEUE; a waiter gives up after 10 s. */
export function decodeSlots(): Slots {
  slots ??= watchSlots(
    "photo_decode",
    new Slots(env().PHOTO_DECODE_SLOTS, env().PHOTO_DECODE_QUEUE, 10_000, () =>
      overloaded("Too many photos are being processed: try again in a moment", 3),
    ),
  );
  return slots;
}

/** What the header says, read without decoding the pixels; undefined when it is no picture sharp knows. */
async function readHeader(input: Buffer) {
  try {
    // no pixel limit here: this reads the header only, and the limit is checked just below with a clear answer
    const m = await sharp(input, { limitInputPixels: false }).metadata();
    return { format: m.format as string | undefined, width: m.width, height: m.height };
  } catch {
    return undefined;
  }
}

/** Decode, turn upright, scale and re-encode: the one costly step, counted. */
export async function decodeAndShrink(input: Buffer, limitInputPixels = PHOTO_MAX_PIXELS) {
  decodeStats.decodes++;
  try {
    const { data, info } = await sharp(input, { limitInputPixels })
      .rotate()
      .resize({ width: PHOTO_MAX_EDGE, height: PHOTO_MAX_EDGE, fit: "inside", withoutEnlargement: true })
      .jpeg({ quality: 82, mozjpeg: true })
      .toBuffer({ resolveWithObject: true });
    return { data, width: info.width, height: info.height, contentType: "image/jpeg" };
  } catch (e) {
    if (e instanceof Error && /pixel limit/i.test(e.message)) throw tooManyPixels();
    throw notAPhoto("That picture could not be read");
  }
}

/**
 * A sent picture made ready to store. The type is judged from the bytes, never from the name or the
 * declared type; the stored copy is re-encoded, turned upright, scaled to PHOTO_MAX_EDGE and carries
 * no metadata at all (sharp drops EXIF, GPS included, unless asked to keep it).
 */
export async function preparePhoto(input: Buffer, within: Slots = decodeSlots()) {
  if (input.byteLength > PHOTO_MAX_BYTES) throw tooLarge();
  const h = await readHeader(input);
  if (!h?.format || !(PHOTO_FORMATS as readonly string[]).includes(h.format) || !h.width || !h.height)
    throw notAPhoto();
  if (h.width * h.height > PHOTO_MAX_PIXELS) {
    decodeStats.refusedByHeader++;
    throw tooManyPixels(h.width, h.height);
  }
  return within.run(() => decodeAndShrink(input));
}
