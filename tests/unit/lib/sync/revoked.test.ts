import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { getMeta, openLocalDb, setMeta, type LocalDb } from "@/lib/sync/local-db";
import { waitingCount } from "@/lib/sync/outbox";
import { queuePhoto } from "@/lib/sync/photos";
import { SessionRevoked, SignedOut, syncOnce } from "@/lib/sync/phone-sync";
import { EMPTY_PAGE, queueReading } from "../../support/phone-sync";

/**
 * A phone whose session was ended elsewhere (issue 24, item 12: a sign-out everywhere or a new
 * password; OWASP ASVS 5.0 V14 Data Protection). At its next contact the server answers 401
 * session_revoked; the phone wipes its copy of the user's records and keeps the work not yet sent.
 */
const engineId = "0b6f5c2e-1111-4a4a-9a9a-000000000001";
const checkId = "0b6f5c2e-2222-4a4a-9a9a-000000000002";
const jpeg = () => new Blob([new Uint8Array([0xff, 0xd8, 0xff])], { type: "image/jpeg" });
const answer401 = (code: string) => async () => Response.json({ error: { code, message: "Sign in" } }, { status: 401 });

const reading = (db: LocalDb, valve: string) => queueReading(db, checkId, { valve, round: 0, feelerGo: 0.15 });

/** A phone that synced before: records, a sent photo, a cursor; then two readings and a photo made offline. */
async function phoneWithCopy(userId: string) {
  const db = openLocalDb(userId);
  await db.engines.put({ id: engineId, name: "Blue four" } as never);
  await db.checks.put({ id: checkId, engineId, status: "measuring", startedAt: "2026-11-01T09:00:00Z" } as never);
  await db.tray.put({ id: "0b6f5c2e-3333-4a4a-9a9a-000000000003", size: 2.5 } as never);
  await db.comments.put({
    id: "0b6f5c2e-4444-4a4a-9a9a-000000000004",
    checkId,
    authorId: userId,
    text: "E3.1 closes fast",
    createdAt: "2026-11-01T10:00:00Z",
  } as never);
  const sent = await queuePhoto(db, { checkId, blob: jpeg() });
  await db.photos.update(sent, { state: "sent" });
  const refused = await queuePhoto(db, { checkId, blob: jpeg() });
  await db.photos.update(refused, { state: "refused", reason: "not a photo" });
  await setMeta(db, "clientId", crypto.randomUUID());
  await setMeta(db, "cursor", "opaque-cursor");
  await setMeta(db, "lastSyncAt", 1_700_000_000_000);
  await setMeta(db, "rejected", [{ id: 1, name: "tray.put/1", reason: "size out of range" }]);
  await reading(db, "I1.1");
  await reading(db, "E1.1");
  const waiting = await queuePhoto(db, { checkId, blob: jpeg() });
  return { db, waiting, refused };
}

const counts = async (db: LocalDb) => ({
  engines: await db.engines.count(),
  checks: await db.checks.count(),
  readings: await db.readings.count(),
  tray: await db.tray.count(),
  comments: await db.comments.count(),
});

describe("a session ended elsewhere wipes the phone's copy at its next sync", () => {
  it("401 session_revoked: no record stays readable; the outbox, unsent and refused photos, refusals and ids stay", async () => {
    const userId = crypto.randomUUID();
    const { db, waiting, refused } = await phoneWithCopy(userId);
    const clientId = await getMeta<string>(db, "clientId");
    const outboxBefore = await db.outbox.toArray();

    await expect(syncOnce(db, answer401("session_revoked"))).rejects.toBeInstanceOf(SessionRevoked);

    expect(await counts(db)).toEqual({ engines: 0, checks: 0, readings: 0, tray: 0, comments: 0 });
    expect(await db.outbox.toArray()).toEqual(outboxBefore);
    expect((await db.photos.toArray()).map((p) => [p.id, p.state]).sort()).toEqual(
      [
        [waiting, "waiting"],
        [refused, "refused"],
      ].sort(),
    );
    expect(await getMeta(db, "cursor")).toBeUndefined();
    expect(await getMeta(db, "lastSyncAt")).toBeUndefined();
    expect(await getMeta(db, "rejected")).toHaveLength(1);
    expect(await getMeta(db, "nextMutationId")).toBe(3);
    expect(await getMeta(db, "clientId")).toBe(clientId);
    db.close();
  });

  it("a plain 401 (no session, or an expired one) keeps everything and only asks for sign-in", async () => {
    const { db } = await phoneWithCopy(crypto.randomUUID());
    const e = await syncOnce(db, answer401("unauthorized")).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(SignedOut);
    expect(e).not.toBeInstanceOf(SessionRevoked);
    expect(await counts(db)).toEqual({ engines: 1, checks: 1, readings: 2, tray: 1, comments: 1 });
    expect(await db.photos.count()).toBe(3);
    expect(await getMeta(db, "cursor")).toBe("opaque-cursor");
    db.close();
  });

  it("the same user signing in again sends the kept work in order, then pulls a full copy", async () => {
    const userId = crypto.randomUUID();
    const { db } = await phoneWithCopy(userId);
    const clientId = await getMeta<string>(db, "clientId");
    await syncOnce(db, answer401("session_revoked")).catch(() => undefined);
    db.close();

    // the next sign-in as the same user opens the same database
    const again = openLocalDb(userId);
    const pushed: { clientId: string; mutations: { id: number; name: string }[] }[] = [];
    let pullCursor: unknown = "none";
    const server = async (url: string, init: RequestInit) => {
      if (url.endsWith("/photos")) return Response.json({ ok: true }, { status: 201 });
      const body = JSON.parse(String(init.body ?? "{}")) as Record<string, unknown>;
      if (url.endsWith("/api/sync/push")) {
        pushed.push(body as never);
        const ids = (body.mutations as { id: number }[]).map((m) => m.id);
        return Response.json({ lastMutationId: Math.max(0, ...ids), rejected: [] });
      }
      pullCursor = body.cursor;
      return Response.json({
        cursor: "c2",
        ...EMPTY_PAGE,
        engines: [{ id: engineId, name: "Blue four" }],
      });
    };
    await syncOnce(again, server as never);
    expect(pushed).toHaveLength(1);
    expect(pushed[0]!.clientId).toBe(clientId);
    expect(pushed[0]!.mutations.map((m) => [m.id, m.name])).toEqual([
      [1, "reading.put/1"],
      [2, "reading.put/1"],
    ]);
    // the cursor went with the copy: the pull starts from nothing
    expect(pullCursor).toBeNull();
    expect(await waitingCount(again)).toBe(0);
    expect(await again.photos.where("state").equals("waiting").count()).toBe(0);
    expect(await again.engines.count()).toBe(1);
    again.close();
  });
});
