import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { openLocalDb, getMeta } from "@/lib/sync/local-db";
import { queuePhoto, uploadPhotos, USAGE_META, type KnownUsage } from "@/lib/sync/photos";
import { ServerBusy } from "@/lib/sync/transport";
import { PHOTO_QUOTA_CODE } from "@/lib/photos/rules";

const checkId = "0b6f5c2e-1111-4a4a-9a9a-000000000002";
const MB = 1024 * 1024;

/** A stand-in for the photo routes: a quota in bytes, each photo taking `each`, and a budget that can be spent. */
function fakeServer(quota: number, each: number) {
  let used = 0;
  let budgetSpent = false;
  const posts: string[] = [];
  const fetcher = async (url: string, init: RequestInit) => {
    if (url.endsWith("/api/photos/usage")) return Response.json({ usedBytes: used, quotaBytes: quota });
    const id = (init.body as FormData).get("id") as string;
    posts.push(id);
    if (budgetSpent)
      return Response.json(
        { error: { code: "throttled", message: "You have sent 120 photos in the last hour" } },
        { status: 429, headers: { "Retry-After": "600" } },
      );
    if (used + each > quota)
      return Response.json(
        { error: { code: PHOTO_QUOTA_CODE, message: `Your photo space is full: ${used} of ${quota} used.` } },
        { status: 409 },
      );
    used += each;
    return Response.json({ photo: { id }, usage: { usedBytes: used, quotaBytes: quota } }, { status: 201 });
  };
  return { fetcher, posts, free: (n: number) => (used -= n), spend: () => (budgetSpent = true) };
}

const blob = () => new Blob([new Uint8Array(1000)], { type: "image/jpeg" });

describe("the phone's photo queue", () => {
  it("a photo the quota refuses stays queued with the reason, is not sent again until space is freed, and is never deleted", async () => {
    const db = openLocalDb(crypto.randomUUID());
    const s = fakeServer(2 * MB, MB);
    for (let i = 0; i < 4; i++) await queuePhoto(db, { checkId, blob: blob() });
    // the order the queue sends them in (photos taken in the same millisecond tie on takenAt)
    const ids = (await db.photos.where("state").equals("waiting").sortBy("takenAt")).map((p) => p.id);

    expect(await uploadPhotos(db, s.fetcher)).toMatchObject({ sent: 2, held: 1, refused: 0 });
    // the queue stopped at the refusal: the fourth was not sent, as it would not fit either
    expect(s.posts).toEqual(ids.slice(0, 3));
    const third = (await db.photos.get(ids[2]!))!;
    expect(third).toMatchObject({ state: "waiting", held: { usedBytes: 2 * MB, quotaBytes: 2 * MB } });
    expect(third.reason).toMatch(/photo space is full/);
    expect(await getMeta<KnownUsage>(db, USAGE_META)).toMatchObject({ usedBytes: 2 * MB, quotaBytes: 2 * MB });

    // nothing changed on the server: the held photo is not sent again (the fourth is, and is held too)
    s.posts.length = 0;
    await uploadPhotos(db, s.fetcher);
    expect(s.posts).toEqual([ids[3]]);
    s.posts.length = 0;
    expect(await uploadPhotos(db, s.fetcher)).toMatchObject({ sent: 0, held: 2 });
    expect(s.posts).toEqual([]);

    // space freed elsewhere: both are sent, and every photo is still on the phone
    s.free(2 * MB);
    expect(await uploadPhotos(db, s.fetcher)).toMatchObject({ sent: 2, held: 0 });
    const all = await db.photos.toArray();
    expect(all.map((p) => [p.state, p.held, p.reason])).toEqual(ids.map(() => ["sent", undefined, undefined]));
  });

  it("a spent upload budget (429) stops the queue and keeps every photo waiting", async () => {
    const db = openLocalDb(crypto.randomUUID());
    const s = fakeServer(100 * MB, MB);
    s.spend();
    await queuePhoto(db, { checkId, blob: blob() });
    await queuePhoto(db, { checkId, blob: blob() });
    const busy = await uploadPhotos(db, s.fetcher).catch((e: unknown) => e);
    expect(busy).toBeInstanceOf(ServerBusy);
    expect((busy as ServerBusy).retryAfterMs).toBe(600_000);
    expect((await db.photos.toArray()).map((p) => p.state)).toEqual(["waiting", "waiting"]);
  });
});
