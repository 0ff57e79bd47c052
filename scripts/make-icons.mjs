// Draws the app icon (a copper shim ring on graphite, with a feeler blade through it) as PNGs.
// Run once with `node scripts/make-icons.mjs`; the PNGs are committed. Hand-written because the
// only job is a few filled shapes: an image library would be a large dependency for that.
import { writeFileSync } from "node:fs";
import { deflateSync } from "node:zlib";

function crc32(buf) {
  let c,
    crc = 0xffffffff;
  for (let n = 0; n < buf.length; n++) {
    c = (crc ^ buf[n]) & 0xff;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    crc = (crc >>> 8) ^ c;
  }
  return (crc ^ 0xffffffff) >>> 0;
}

function chunk(type, data) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
}

function png(size, pixel) {
  const raw = Buffer.alloc((size * 4 + 1) * size);
  for (let y = 0; y < size; y++) {
    raw[y * (size * 4 + 1)] = 0;
    for (let x = 0; x < size; x++) {
      const [r, g, b, a] = pixel(x / size, y / size);
      const o = y * (size * 4 + 1) + 1 + x * 4;
      raw[o] = r;
      raw[o + 1] = g;
      raw[o + 2] = b;
      raw[o + 3] = a;
    }
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(size, 0);
  ihdr.writeUInt32BE(size, 4);
  ihdr[8] = 8;
  ihdr[9] = 6;
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk("IHDR", ihdr),
    chunk("IDAT", deflateSync(raw)),
    chunk("IEND", Buffer.alloc(0)),
  ]);
}

const BG = [18, 20, 23, 255];
const COPPER = [232, 148, 90, 255];
const BONE = [242, 239, 230, 255];
// maskable: everything that matters inside the central 80% circle
const icon = (x, y) => {
  const dx = x - 0.5,
    dy = y - 0.5;
  const r = Math.hypot(dx, dy);
  if (Math.abs(dy + dx * 0.35) < 0.035 && Math.abs(dx) < 0.34) return BONE; // the blade
  if (r > 0.17 && r < 0.3) return COPPER; // the shim
  return BG;
};
for (const size of [192, 512]) writeFileSync(`public/icons/icon-${size}.png`, png(size, icon));
writeFileSync("public/icons/apple-touch-icon.png", png(180, icon));
