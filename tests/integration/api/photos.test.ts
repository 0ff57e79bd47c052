import { describe, expect, it } from "vitest";
import exifr from "exifr";
import sharp from "sharp";
import { signedInClient } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR } from "../../support/fixtures";
import { cameraJpeg, photoForm, storedKeys } from "../../support/photos";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

const app = appPerFile();

const signedIn = (u: { email: string; password: string }) => signedInClient(app.url, u);

async function setUp() {
  const [owner, mentor, stranger, otherMentor] = await makeUsers("ph-owner", "ph-mentor", "ph-stranger", "ph-other");
  const o = await signedIn(owner!);
  const clubId = (await o.post("/api/clubs", { name: "Photo Club" })).json.club.id as string;
  await addMembership(clubId, mentor!.id, ["mentor"]);
  const s = await signedIn(stranger!);
  const om = await signedIn(otherMentor!);
  const otherClub = (await om.post("/api/clubs", { name: "Other Photo Club" })).json.club.id as string;
  await addMembership(otherClub, otherMentor!.id, ["mentor"]);
  const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 8_000 })).json.check.id as string;
  const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
  return { o, m: await signedIn(mentor!), s, om, checkId, shareId };
}

async function uploadRows(checkId: string) {
  const c = await rawConnection();
  const [rows] = await c.query("SELECT id FROM uploads WHERE check_id = ?", [checkId]);
  await c.end();
  return (rows as unknown[]).length;
}

describe("photo uploads", () => {
  it("stores a scaled copy with no location data, readable by the owner and the club's mentors only", async () => {
    const t = await setUp();
    const original = await cameraJpeg();
    expect(await exifr.gps(original)).toMatchObject({ latitude: 51.5 }); // the test photo does carry a position (read by exifr)
    const id = crypto.randomUUID();
    const up = await t.o.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(original, { id, valve: "I1.1" }));
    expect(up.status).toBe(201);
    expect(up.json.photo).toMatchObject({ id, valve: "I1.1", width: 1600, height: 1200 });

    const got = await fetch(`${app.url}/api/photos/${id}`, { headers: { cookie: t.m.cookieHeader() } });
    expect(got.status).toBe(200);
    expect(got.headers.get("content-type")).toBe("image/jpeg");
    const bytes = Buffer.from(await got.arrayBuffer());
    const meta = await sharp(bytes).metadata();
    expect([meta.format, meta.width, meta.height]).toEqual(["jpeg", 1600, 1200]);
    expect(meta.exif).toBeUndefined();
    expect(await exifr.gps(bytes).catch(() => undefined)).toBeUndefined();

    for (const c of [t.s, t.om]) {
      expect((await c.get(`/api/photos/${id}`)).status).toBe(404);
      expect((await c.get(`/api/checks/${t.checkId}/photos`)).status).toBe(404);
      expect((await c.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(original))).status).toBe(404);
    }
    expect((await t.m.get(`/api/checks/${t.checkId}/photos`)).json.items.map((p: { id: string }) => p.id)).toEqual([
      id,
    ]);
    // withdrawing the share takes the photos away from the mentor at once
    expect((await t.o.del(`/api/shares/${t.shareId}`)).status).toBe(204);
    expect((await t.m.get(`/api/photos/${id}`)).status).toBe(404);
  });

  it("refuses a file with a picture's name but other content, and stores nothing", async () => {
    const t = await setUp();
    const before = (await storedKeys(`checks/${t.checkId}/`)).length;
    const fake = Buffer.from("<?php echo 'not a photo'; ?>\n".repeat(40));
    const r = await t.o.form(
      "POST",
      `/api/checks/${t.checkId}/photos`,
      photoForm(fake, { name: "shim-stamp.jpg", type: "image/jpeg" }),
    );
    expect(r.status).toBe(415);
    expect(r.json.error).toMatchObject({ code: "not_a_photo", message: expect.any(String) });
    // an SVG (a picture that can carry script) is refused too
    const svg = Buffer.from(
      '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><script>alert(1)</script></svg>',
    );
    expect(
      (
        await t.o.form(
          "POST",
          `/api/checks/${t.checkId}/photos`,
          photoForm(svg, { name: "cam.png", type: "image/png" }),
        )
      ).status,
    ).toBe(415);
    expect(await uploadRows(t.checkId)).toBe(0);
    expect((await storedKeys(`checks/${t.checkId}/`)).length).toBe(before);
  });

  it("refuses an oversized upload and stores nothing", async () => {
    const t = await setUp();
    const big = Buffer.concat([await cameraJpeg(400, 300), Buffer.alloc(11 * 1024 * 1024, 7)]);
    const r = await t.o.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(big));
    expect(r.status).toBe(413);
    expect(r.json.error.message).toMatch(/10 MB/);
    expect(await uploadRows(t.checkId)).toBe(0);
    expect(await storedKeys(`checks/${t.checkId}/`)).toEqual([]);
  });

  it("the same photo sent twice (a lost answer) is stored once", async () => {
    const t = await setUp();
    const id = crypto.randomUUID();
    const jpeg = await cameraJpeg(800, 600);
    expect((await t.o.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { id }))).status).toBe(201);
    expect((await t.o.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { id }))).status).toBe(200);
    expect(await uploadRows(t.checkId)).toBe(1);
    // another user cannot take over that id
    expect((await t.m.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { id }))).status).toBe(409);
  });

  it("a photo on a comment must name a comment of the same check; only its uploader or the owner removes it", async () => {
    const t = await setUp();
    const jpeg = await cameraJpeg(640, 480);
    const commentId = (await t.m.post(`/api/checks/${t.checkId}/comments`, { body: "Stamp reads 2.65?" })).json.comment
      .id as string;
    expect(
      (await t.m.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { commentId: crypto.randomUUID() })))
        .status,
    ).toBe(422);
    const id = crypto.randomUUID();
    expect((await t.m.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { id, commentId }))).status).toBe(
      201,
    );
    const mine = crypto.randomUUID();
    expect((await t.o.form("POST", `/api/checks/${t.checkId}/photos`, photoForm(jpeg, { id: mine }))).status).toBe(201);
    expect((await t.m.del(`/api/photos/${mine}`)).status).toBe(403);
    expect((await t.o.del(`/api/photos/${id}`)).status).toBe(204);
    expect((await t.o.get(`/api/photos/${id}`)).status).toBe(404);
    expect(await storedKeys(`checks/${t.checkId}/${id}`)).toEqual([]);
  });
});
