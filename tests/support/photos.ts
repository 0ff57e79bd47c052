import sharp from "sharp";
import { ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";

/** A real JPEG as a phone camera makes one: large, with the camera's make and a GPS position. */
export async function cameraJpeg(width = 2400, height = 1800) {
  return sharp({ create: { width, height, channels: 3, background: "#7a5a3a" } })
    .withExif({
      IFD0: { Make: "TestCam" },
      IFD3: { GPSLatitudeRef: "N", GPSLatitude: "51/1 30/1 0/1", GPSLongitudeRef: "W", GPSLongitude: "1/1 15/1 0/1" },
    })
    .jpeg({ quality: 90 })
    .toBuffer();
}

export function photoForm(
  file: Buffer | Uint8Array,
  fields: { id?: string; valve?: string; commentId?: string; name?: string; type?: string } = {},
) {
  const form = new FormData();
  form.set("id", fields.id ?? crypto.randomUUID());
  if (fields.valve) form.set("valve", fields.valve);
  if (fields.commentId) form.set("commentId", fields.commentId);
  form.set(
    "file",
    new Blob([new Uint8Array(file)], { type: fields.type ?? "image/jpeg" }),
    fields.name ?? "blade-in-gap.jpg",
  );
  return form;
}

/** The test photo store's bucket. */
export const PHOTO_BUCKET = process.env.S3_BUCKET ?? "lashwright-photos";

/** A client of the test photo store, reaching it around the app. */
export function photoStore() {
  return new S3Client({
    endpoint: process.env.S3_ENDPOINT,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: {
      accessKeyId: process.env.S3_ACCESS_KEY ?? "S3RVER",
      secretAccessKey: process.env.S3_SECRET_KEY ?? "S3RVER",
    },
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}

/** Every key in the test photo store, to prove a refused upload stored nothing. */
export async function storedKeys(prefix = ""): Promise<string[]> {
  const r = await photoStore().send(new ListObjectsV2Command({ Bucket: PHOTO_BUCKET, Prefix: prefix }));
  return (r.Contents ?? []).map((o) => o.Key!);
}

/**
 * A 400 x 300 picture of noise from a fixed seed (about 70 KB stored): it barely shrinks when
 * re-encoded, and storing it takes long enough for concurrent tries to overlap.
 */
export function noisyPng(seed: number) {
  const b = Buffer.alloc(400 * 300 * 3);
  let x = seed;
  for (let i = 0; i < b.length; i++) {
    x = (x * 1103515245 + 12345) >>> 0;
    b[i] = x >>> 24;
  }
  return sharp(b, { raw: { width: 400, height: 300, channels: 3 } })
    .png()
    .toBuffer();
}
