import "server-only";
import {
  DeleteObjectCommand,
  GetObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
} from "@aws-sdk/client-s3";
import type { Readable } from "node:stream";
import { env } from "@/lib/env";

/** The photo store: any S3-compatible service; npm start and npm test run a local one. */
let client: S3Client | undefined;
function s3() {
  const e = env();
  client ??= new S3Client({
    endpoint: e.S3_ENDPOINT,
    region: e.S3_REGION,
    forcePathStyle: true,
    credentials: { accessKeyId: e.S3_ACCESS_KEY, secretAccessKey: e.S3_SECRET_KEY },
    // only the checksums S3 itself demands: the local store does not know the newer trailers
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  return client;
}

export async function putObject(key: string, body: Buffer, contentType: string) {
  await s3().send(new PutObjectCommand({ Bucket: env().S3_BUCKET, Key: key, Body: body, ContentType: contentType }));
}

export async function getObject(key: string): Promise<Uint8Array> {
  const r = await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
  return r.Body!.transformToByteArray();
}

/** An object's bytes as a stream, for an export that must not hold every photo at once. */
export async function getObjectStream(key: string, signal?: AbortSignal): Promise<Readable> {
  const r = await s3().send(new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }), { abortSignal: signal });
  return r.Body as Readable;
}

export async function deleteObject(key: string) {
  await s3().send(new DeleteObjectCommand({ Bucket: env().S3_BUCKET, Key: key }));
}

/** Keys under a prefix with their age, a page of up to 1,000 at a time. */
export async function* listObjects(prefix: string): AsyncGenerator<{ key: string; modified: Date }[]> {
  let token: string | undefined;
  do {
    const r = await s3().send(
      new ListObjectsV2Command({ Bucket: env().S3_BUCKET, Prefix: prefix, ContinuationToken: token }),
    );
    yield (r.Contents ?? []).map((o) => ({ key: o.Key!, modified: o.LastModified ?? new Date(0) }));
    token = r.IsTruncated ? r.NextContinuationToken : undefined;
  } while (token);
}
