import "server-only";
import sharp from "sharp";
import { PHOTO_FORMATS, PHOTO_MAX_BYTES, PHOTO_MAX_EDGE, PHOTO_MAX_LABEL, PHOTO_MAX_PIXELS, PHOTO_MAX_PIXELS_LABEL } from "@/lib/photos/rules";
import { DomainError, overloaded } from "@/lib/errors";
import { env } from "@/lib/env";

/**
 * Decoding a sent picture is the costliest thing an upload does (memory in proportion to its
 * pixels, and a thread of libuv's pool, which password hashing shares), so it is bounded three
 * ways: the header's dimensions are read first and a picture over PHOTO_MAX_PIXELS is refused before
 * a single pixel is decoded (OWASP ASVS 5.0 5.2.6, pixel flood); sharp's own limitInputPixels stands
 * behind that; and only a few decodes run at once per process, with a short queue (5.2.1: only what
 * can be processed without a loss of performance).
 */
export const tooLarge = () => new DomainError("too_large", `A photo may be at most ${PHOTO_MAX_LABEL}`);
const notAPhoto = (message = "That file is not a JPEG, PNG or WebP picture") => new DomainError("unsupported", message, { code: "not_a_photo" });
const tooManyPixels = (w?: number, h?: number) =>
  new DomainError("too_large", `A photo may have at most ${PHOTO_MAX_PIXELS_LABEL}${w && h ? `; this one is ${w} × ${h}` : ""}. Send a smaller copy.`, { code: "too_many_pixels" });

/** How much decoding this process has done: tests count work with it, never time. */
export const decodeStats = { decodes: 0, refusedByHeader: 0 };

/**
 * A counting semaphore that refuses rather than queues without end: `size` run at once, up to
 * `maxWaiting` wait (each at most `maxWaitMs`), and any more are answered "busy" at once (503 with
 * Retry-After). Written here because the limiters at hand queue without a bound and cannot refuse.
 */
export class Slots {
  private running = 0;
  private readonly waiting: { go: () => void }[] = [];
  /** the most that ever ran at once */
  peak = 0;
  constructor(
    readonly size: number,
    readonly maxWaiting: number,
    readonly maxWaitMs: number,
    private readonly busy: () => Error = () => overloaded("Too many photos are being processed: try again in a moment", 3),
  ) {}

  get inUse() {
    return this.running;
  }
  get queued() {
    return this.waiting.length;
  }

  private take() {
    this.running++;
    this.peak = Math.max(this.peak, this.running);
  }

  private acquire(): Promise<void> {
    if (this.running < this.size) {
      this.take();
      return Promise.resolve();
    }
    if (this.waiting.length >= this.maxWaiting) return Promise.reject(this.busy());
    return new Promise<void>((resolve, reject) => {
      const w = {
        go: () => {
          clearTimeout(timer);
          this.take();
          resolve();
        },
      };
      const timer = setTimeout(() => {
        const i = this.waiting.indexOf(w);
        if (i >= 0) this.waiting.splice(i, 1);
        reject(this.busy());
      }, this.maxWaitMs);
      timer.unref?.();
      this.waiting.push(w);
    });
  }

  private release() {
    this.running--;
    this.waiting.shift()?.go();
  }

  async run<T>(fn: () => Promise<T>): Promise<T> {
    await this.acquire();
    try {
      return await fn();
    } finally {
      this.release();
    }
  }
}

let slots: Slots | undefined;
/** The process's decode slots, sized by PHOTO_DECODE_SLOTS and PHOTO_DECODE_QUEUE; a waiter gives up after 10 s. */
export function decodeSlots(): Slots {
  slots ??= new Slots(env().PHOTO_DECODE_SLOTS, env().PHOTO_DECODE_QUEUE, 10_000);
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
  if (!h?.format || !(PHOTO_FORMATS as readonly string[]).includes(h.format) || !h.width || !h.height) throw notAPhoto();
  if (h.width * h.height > PHOTO_MAX_PIXELS) {
    decodeStats.refusedByHeader++;
    throw tooManyPixels(h.width, h.height);
  }
  return within.run(() => decodeAndShrink(input));
}
