import { describe, expect, it } from "vitest";
import sharp from "sharp";
import { signedInClient, type Client } from "../../support/api";
import { queryRows, rawConnection } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { noisyPng, photoForm, storedKeys } from "../../support/photos";
import { appPerFile } from "../../support/per-file";

/**
 * Issue 24 item 7: one account's uploads must not cost everyone else. A picture's pixels are judged
 * from its header before it is decoded, decodes run a few at a time, an account sends so many photos
 * an hour and stores so many bytes. The server here runs with small limits so each is reached:
 * one decode at a time and none waiting, 4 uploads an hour, and room for two of the noisy test photos.
 */
const NOISY_STORED_BYTES = 69_595; // what the 400 x 300 noisy PNG below re-encodes to (measured; the encoder is deterministic)
const QUOTA = Math.floor(NOISY_STORED_BYTES * 2.5);

const app = appPerFile({
  PHOTO_DECODE_SLOTS: "1",
  PHOTO_DECODE_QUEUE: "0",
  PHOTO_UPLOADS_PER_HOUR: "4",
  PHOTO_QUOTA_BYTES: String(QUOTA),
});

async function owner(tag: string) {
  const c = await signedInClient(app.url, await makeUser(tag));
  const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await c.post(`/api/engines/${engineId}/checks`, { odometer: 12_000 })).json.check.id as string;
  return { c, checkId };
}

/** POST a photo and keep the headers (Retry-After). */
async function upload(c: Client, checkId: string, form: FormData) {
  const res = await fetch(`${app.url}/api/checks/${checkId}/photos`, {
    method: "POST",
    headers: { cookie: c.cookieHeader(), origin: app.url },
    body: form,
  });
  const json = (await res.json().catch(() => null)) as {
    error?: { code: string; message: string };
    photo?: { id: string; bytes: number };
  } | null;
  return { status: res.status, json, retryAfter: res.headers.get("retry-after") };
}

const tinyJpeg = () =>
  sharp({ create: { width: 64, height: 48, channels: 3, background: "#7a5a3a" } })
    .jpeg()
    .toBuffer();

const rowsOf = (userId: string) =>
  queryRows<{ id: string; bytes: number; stored: number }>(
    "SELECT id, bytes, stored_at IS NOT NULL AS stored FROM uploads WHERE owner_id = ? ORDER BY id",
    [userId],
  );

/** Units of the upload budget the account has spent this hour, as the budget's table counts them. */
async function budgetSpent(userId: string) {
  const c = await rawConnection();
  const [rows] = await c.query("SELECT points FROM rate_limits WHERE `key` = ?", [`photo-upload:account:${userId}`]);
  await c.end();
  return (rows as { points: number }[])[0]?.points ?? 0;
}

async function userIdOf(c: Client) {
  return (await c.get("/api/account")).json.user.id as string;
}

describe("photo uploads within fair use", () => {
  it("a 146 KB PNG of 7071 x 7071 is refused from its header with a clear 413, and nothing is stored", async () => {
    const { c, checkId } = await owner("ph-bomb");
    const bomb = await sharp({ create: { width: 7071, height: 7071, channels: 3, background: "#ffffff" } })
      .png({ compressionLevel: 9 })
      .toBuffer();
    expect(bomb.byteLength).toBeLessThan(200 * 1024);
    const r = await upload(c, checkId, photoForm(bomb, { name: "shim.png", type: "image/png" }));
    expect(r.status).toBe(413);
    // too_many_pixels is answered only by the header check (or sharp's limit behind it): no decode ran to its end
    expect(r.json?.error).toMatchObject({
      code: "too_many_pixels",
      message: expect.stringMatching(/at most 25 megapixels; this one is 7071 × 7071/),
    });
    expect(await rowsOf(await userIdOf(c))).toEqual([]);
    expect(await storedKeys(`checks/${checkId}/`)).toEqual([]);
  });

  it("decodes run one at a time here: a burst beyond the cap is answered 503 with Retry-After, and every accepted photo is whole", async () => {
    // 5000 x 4000 (20 megapixels, under the limit): each decode keeps the slot for a while
    const big = await sharp({ create: { width: 5000, height: 4000, channels: 3, background: "#5a6a7a" } })
      .png()
      .toBuffer();
    const owners = await Promise.all([1, 2, 3].map((i) => owner(`ph-burst-${i}`)));
    const tries = owners.flatMap((o) => [1, 2, 3].map(() => ({ o, id: crypto.randomUUID() })));
    const answers = await Promise.all(
      tries.map((t) => upload(t.o.c, t.o.checkId, photoForm(big, { id: t.id, name: "big.png", type: "image/png" }))),
    );
    const statuses = answers.map((a) => a.status);
    expect(
      statuses.every((s) => s === 201 || s === 503),
      statuses.join(","),
    ).toBe(true);
    const busy = answers.filter((a) => a.status === 503);
    expect(busy.length).toBeGreaterThan(0);
    for (const b of busy) {
      expect(b.json?.error?.code).toBe("overloaded");
      expect(Number(b.retryAfter)).toBeGreaterThan(0);
    }
    expect(statuses).toContain(201);
    // what was accepted is stored whole; what was turned away left nothing behind
    for (const o of owners) {
      const accepted = tries.filter((t, i) => t.o === o && answers[i]!.status === 201).map((t) => t.id);
      expect((await rowsOf(await userIdOf(o.c))).map((r) => [r.id, r.stored])).toEqual(
        accepted.sort().map((id) => [id, 1]),
      );
      expect((await storedKeys(`checks/${o.checkId}/`)).sort()).toEqual(
        accepted.map((id) => `checks/${o.checkId}/${id}.jpg`).sort(),
      );
    }
    // a turned-away upload gave its unit of the hour's budget back, and goes through when sent again
    const again = tries[answers.findIndex((a) => a.status === 503)]!;
    const againUser = await userIdOf(again.o.c);
    const accepted = tries.filter((t, i) => t.o === again.o && answers[i]!.status === 201).length;
    expect(await budgetSpent(againUser)).toBe(accepted);
    expect(
      (await upload(again.o.c, again.o.checkId, photoForm(big, { id: again.id, name: "big.png", type: "image/png" })))
        .status,
    ).toBe(201);
    expect(await budgetSpent(againUser)).toBe(accepted + 1);
  });

  it("an account's fifth upload in the hour is answered 429 with Retry-After; a retry of a stored photo and other accounts go on", async () => {
    const { c, checkId } = await owner("ph-budget");
    const jpeg = await tinyJpeg();
    const ids = [1, 2, 3, 4].map(() => crypto.randomUUID());
    for (const id of ids) expect((await upload(c, checkId, photoForm(jpeg, { id }))).status).toBe(201);
    const fifth = await upload(c, checkId, photoForm(jpeg));
    expect(fifth.status).toBe(429);
    expect(fifth.json?.error?.code).toBe("throttled");
    expect(fifth.json?.error?.message).toMatch(/4 photos in the last hour/);
    expect(Number(fifth.retryAfter)).toBeGreaterThan(0);
    expect(Number(fifth.retryAfter)).toBeLessThanOrEqual(3600);
    expect((await rowsOf(await userIdOf(c))).length).toBe(4);
    // the phone confirming a photo it already sent (its answer was lost) is never held by the budget
    expect((await upload(c, checkId, photoForm(jpeg, { id: ids[0] }))).status).toBe(200);
    // the budget is the account's own
    const other = await owner("ph-budget-other");
    expect((await upload(other.c, other.checkId, photoForm(jpeg))).status).toBe(201);
  });

  it("an upload beyond the account's photo space is refused naming the quota, and leaves the stored photos as they were", async () => {
    const { c, checkId } = await owner("ph-quota");
    const userId = await userIdOf(c);
    const usage0 = (await c.get("/api/photos/usage")).json;
    expect(usage0).toEqual({ usedBytes: 0, quotaBytes: QUOTA });
    const first = await upload(c, checkId, photoForm(await noisyPng(1), { id: crypto.randomUUID() }));
    const second = await upload(c, checkId, photoForm(await noisyPng(2), { id: crypto.randomUUID() }));
    expect([first.status, second.status]).toEqual([201, 201]);
    expect(first.json?.photo?.bytes).toBe(NOISY_STORED_BYTES);

    const rowsBefore = await rowsOf(userId);
    const keysBefore = (await storedKeys(`checks/${checkId}/`)).sort();
    const usageBefore = (await c.get("/api/photos/usage")).json;
    const thirdId = crypto.randomUUID();
    const third = await upload(c, checkId, photoForm(await noisyPng(3), { id: thirdId }));
    expect(third.status).toBe(409);
    expect(third.json?.error?.code).toBe("photo_quota");
    // the message names the quota: how much is used of how much
    expect(third.json?.error?.message).toMatch(/: 136 KB of 170 KB used, and this photo takes/);
    expect(await rowsOf(userId)).toEqual(rowsBefore);
    expect((await storedKeys(`checks/${checkId}/`)).sort()).toEqual(keysBefore);
    expect((await c.get("/api/photos/usage")).json).toEqual(usageBefore);

    // room made: the same photo, sent again as the phone keeps it queued, is stored
    expect((await c.del(`/api/photos/${first.json!.photo!.id}`)).status).toBe(204);
    expect((await upload(c, checkId, photoForm(await noisyPng(3), { id: thirdId }))).status).toBe(201);
    expect((await c.get(`/api/photos/${thirdId}`)).status).toBe(200);
  });
});
