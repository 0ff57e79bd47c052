import zlib from "node:zlib";
import sharp from "sharp";
import { afterEach, describe, expect, it, vi } from "vitest";
import { DomainError } from "@/lib/errors";
import { decodeAndShrink, decodeStats, preparePhoto, Slots } from "@/server/photo-decode";

// A PNG is its header and compressed rows; the header alone says how large the picture unpacks.
const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(b: Buffer) {
  let c = 0xffffffff;
  for (const x of b) c = CRC_TABLE[(c ^ x) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function chunk(type: string, data: Buffer) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, "latin1"), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(body));
  return Buffer.concat([len, body, crc]);
}
/** A PNG header of width x height (8-bit RGB, PNG specification section 11.2.2) over two rows of data: a few hundred bytes. */
function pngHeader(width: number, height: number) {
  const size = Buffer.alloc(8);
  size.writeUInt32BE(width, 0);
  size.writeUInt32BE(height, 4);
  // then 8 bits a sample, colour type 2 (RGB), deflate, adaptive filtering, no interlace
  const ihdr = Buffer.concat([size, Buffer.from([8, 2, 0, 0, 0])]);
  const signature = Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]);
  const twoRows = zlib.deflateSync(Buffer.alloc(2 * (1 + width * 3)));
  return Buffer.concat([signature, chunk("IHDR", ihdr), chunk("IDAT", twoRows), chunk("IEND", Buffer.alloc(0))]);
}

const kindOf = (p: Promise<unknown>) =>
  p.then(
    () => "ok",
    (e: unknown) => (e instanceof DomainError ? `${e.kind}${e.extra.code ? `/${e.extra.code}` : ""}` : String(e)),
  );

/** A task that holds its slot until let go. */
function held() {
  let letGo!: () => void;
  const gate = new Promise<void>((r) => (letGo = r));
  return { letGo, task: () => gate };
}

afterEach(() => vi.useRealTimers());

describe("photo decoding", () => {
  it("refuses a 7071 x 7071 PNG from its header, without decoding a pixel", async () => {
    const bomb = pngHeader(7071, 7071);
    const slots = new Slots(2, 2, 1000);
    const before = { ...decodeStats };
    const refusal = await preparePhoto(bomb, slots).catch((e: unknown) => e);
    expect(refusal).toBeInstanceOf(DomainError);
    expect(refusal).toMatchObject({ kind: "too_large", extra: { code: "too_many_pixels" } });
    expect((refusal as Error).message).toMatch(/25 megapixels; this one is 7071 × 7071/);
    expect(decodeStats.decodes).toBe(before.decodes);
    expect(decodeStats.refusedByHeader).toBe(before.refusedByHeader + 1);
    expect(slots.peak).toBe(0);
  });

  it("sharp's own pixel limit stands behind the header check", async () => {
    // straight to the decode step, as if the header check were gone: sharp refuses before decoding rows
    expect(await kindOf(decodeAndShrink(pngHeader(7071, 7071)))).toBe("too_large/too_many_pixels");
    // under the limit the same kind of file gets past it and fails on its missing rows instead
    expect(await kindOf(decodeAndShrink(pngHeader(5000, 5000)))).toBe("unsupported/not_a_photo");
  });

  it("takes a picture at the limit and re-encodes it as a JPEG", async () => {
    const png = await sharp({ create: { width: 640, height: 480, channels: 3, background: "#335577" } })
      .png()
      .toBuffer();
    const before = decodeStats.decodes;
    const out = await preparePhoto(png, new Slots(1, 0, 1000));
    expect([out.contentType, out.width, out.height]).toEqual(["image/jpeg", 640, 480]);
    expect(decodeStats.decodes).toBe(before + 1);
  });
});

describe("decode slots", () => {
  it("runs at most `size` at once, queues at most `maxWaiting`, and answers any more busy at once", async () => {
    const slots = new Slots(2, 1, 60_000);
    const a = held();
    const b = held();
    const c = held();
    const runA = slots.run(a.task);
    const runB = slots.run(b.task);
    let cStarted = false;
    const runC = slots.run(() => ((cStarted = true), c.task()));
    const refused = await slots.run(async () => "ran").catch((e: unknown) => e);
    expect(refused).toMatchObject({ kind: "overloaded", extra: { retryAfterSeconds: 3 } });
    expect([slots.inUse, slots.queued, cStarted]).toEqual([2, 1, false]);
    a.letGo();
    await runA;
    expect(cStarted).toBe(true);
    b.letGo();
    c.letGo();
    await Promise.all([runB, runC]);
    expect([slots.inUse, slots.queued, slots.peak]).toEqual([0, 0, 2]);
  });

  it("a waiter gives up after the bounded wait, and its place is freed", async () => {
    vi.useFakeTimers();
    const slots = new Slots(1, 1, 10_000);
    const a = held();
    const runA = slots.run(a.task);
    const waiter = kindOf(slots.run(async () => "late"));
    expect(slots.queued).toBe(1);
    await vi.advanceTimersByTimeAsync(10_000);
    expect(await waiter).toBe("overloaded");
    expect(slots.queued).toBe(0);
    a.letGo();
    await runA;
    expect(await slots.run(async () => "next")).toBe("next");
  });

  it("uploads beyond the cap are turned away before decoding, and the rest decode one at a time", async () => {
    const png = await sharp({ create: { width: 320, height: 240, channels: 3, background: "#553322" } })
      .png()
      .toBuffer();
    const slots = new Slots(1, 2, 60_000);
    const blocker = held();
    const busy = slots.run(blocker.task);
    const before = decodeStats.decodes;
    const answers: string[] = [];
    const tries = [1, 2, 3, 4].map(() => kindOf(preparePhoto(png, slots)).then((k) => (answers.push(k), k)));
    // all four read their headers: two queue behind the held slot and two are refused at once
    await vi.waitFor(() => expect([slots.queued, answers]).toEqual([2, ["overloaded", "overloaded"]]));
    blocker.letGo();
    await busy;
    expect((await Promise.all(tries)).sort()).toEqual(["ok", "ok", "overloaded", "overloaded"]);
    expect(decodeStats.decodes).toBe(before + 2);
    expect(slots.peak).toBe(1);
  });
});
