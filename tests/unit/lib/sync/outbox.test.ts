import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { LashInputError } from "@/lib/lash";
import { openLocalDb, type LocalDb } from "@/lib/sync/local-db";
import { queueChange, waitingCount } from "@/lib/sync/outbox";
import { pushAll, SignedOut, syncOnce } from "@/lib/sync/phone-sync";
import { EMPTY_PAGE, queueReading } from "../../support/phone-sync";

const checkId = "0b6f5c2e-1111-4a4a-9a9a-000000000001";

function freshDb(): LocalDb {
  return openLocalDb(crypto.randomUUID());
}

async function addReadings(db: LocalDb, n: number) {
  for (let i = 0; i < n; i++)
    await queueReading(db, checkId, {
      valve: `I${(i % 4) + 1}.${(i % 2) + 1}`,
      round: Math.floor(i / 8) % 50,
      feelerGo: 0.1 + (i % 300) / 1000,
    });
}

type ServerMode = "ok" | "throw" | "500" | "drop-response" | "401";

/**
 * A stand-in for the server's push contract (the real one is tested on MariaDB in the integration
 * tests): applies mutations above the client's last id, remembers every application, and can be
 * told to fail in the ways a network fails.
 */
function fakeServer() {
  const last = new Map<string, number>();
  const applied: number[] = [];
  let mode: ServerMode = "ok";
  const fetcher = async (url: string, init: RequestInit) => {
    if (mode === "throw") throw new TypeError("Failed to fetch");
    if (mode === "401")
      return new Response(JSON.stringify({ error: { code: "unauthorized", message: "Sign in first" } }), {
        status: 401,
      });
    if (mode === "500") return new Response("{}", { status: 500 });
    const body = JSON.parse(String(init.body));
    if (url.endsWith("/api/sync/pull")) return Response.json({ cursor: 1, ...EMPTY_PAGE });
    let l = last.get(body.clientId) ?? 0;
    for (const m of body.mutations as { id: number }[]) {
      if (m.id <= l) continue;
      applied.push(m.id);
      l = m.id;
    }
    last.set(body.clientId, l);
    if (mode === "drop-response") {
      mode = "ok";
      throw new TypeError("connection reset after commit");
    }
    return Response.json({ lastMutationId: l, rejected: [] });
  };
  return { fetcher, applied, setMode: (m: typeof mode) => (mode = m) };
}

/** A new phone with n readings queued, and a server answering as `mode` says (as it comes: "ok"). */
async function queuedAgainst(n: number, mode?: ServerMode) {
  const db = freshDb();
  const s = fakeServer();
  await addReadings(db, n);
  if (mode) s.setMode(mode);
  return { db, s };
}

describe("the outbox", () => {
  it("saves the local record and the mutation together, with increasing ids", async () => {
    const db = freshDb();
    await addReadings(db, 3);
    const entries = await db.outbox.orderBy("mutationId").toArray();
    expect(entries.map((e) => e.mutationId)).toEqual([1, 2, 3]);
    expect(await db.readings.count()).toBe(3);
  });

  it("refuses an invalid mutation and saves nothing of it", async () => {
    const db = freshDb();
    const bad = { checkId, reading: { valve: "X9", feelerGo: -1 } };
    await expect(
      queueChange(db, "reading.put/1", bad as never, async () =>
        db.readings.put({ checkId, valve: "X9", round: 0 } as never),
      ),
    ).rejects.toBeInstanceOf(LashInputError);
    expect(await db.outbox.count()).toBe(0);
    expect(await db.readings.count()).toBe(0);
  });

  it("rolls back the local write when queueing fails inside the transaction", async () => {
    const db = freshDb();
    await expect(
      queueChange(
        db,
        "reading.put/1",
        { checkId, reading: { valve: "I1.1", round: 0, method: "feeler" } } as never,
        async () => {
          await db.readings.put({ checkId, valve: "I1.1", round: 0 } as never);
          throw new Error("disk full");
        },
      ),
    ).rejects.toThrow("disk full");
    expect(await db.readings.count()).toBe(0);
    expect(await db.outbox.count()).toBe(0);
  });
});

describe("push", () => {
  it("sends in order in batches and removes only what the server acknowledged", async () => {
    const { db, s } = await queuedAgainst(450);
    const r = await pushAll(db, s.fetcher);
    expect(r.acknowledged).toBe(450);
    expect(s.applied).toEqual(Array.from({ length: 450 }, (_, i) => i + 1));
    expect(await waitingCount(db)).toBe(0);
  });

  it("keeps everything when the network fails, and sends it later, once", async () => {
    const { db, s } = await queuedAgainst(10, "throw");
    await expect(pushAll(db, s.fetcher)).rejects.toThrow();
    expect(await waitingCount(db)).toBe(10);
    s.setMode("500");
    await expect(pushAll(db, s.fetcher)).rejects.toThrow(/500/);
    expect(await waitingCount(db)).toBe(10);
    s.setMode("ok");
    await pushAll(db, s.fetcher);
    expect(s.applied).toHaveLength(10);
    expect(await waitingCount(db)).toBe(0);
  });

  it("a response lost after the server committed: the retry is acknowledged, nothing applied twice", async () => {
    const { db, s } = await queuedAgainst(5, "drop-response");
    await expect(pushAll(db, s.fetcher)).rejects.toThrow();
    expect(await waitingCount(db)).toBe(5);
    await addReadings(db, 2);
    await pushAll(db, s.fetcher);
    expect(s.applied).toEqual([1, 2, 3, 4, 5, 6, 7]);
    expect(await waitingCount(db)).toBe(0);
  });

  it("a 401 keeps the outbox and says sign in again", async () => {
    const { db, s } = await queuedAgainst(4, "401");
    await expect(syncOnce(db, s.fetcher)).rejects.toBeInstanceOf(SignedOut);
    expect(await waitingCount(db)).toBe(4);
    s.setMode("ok");
    await syncOnce(db, s.fetcher);
    expect(await waitingCount(db)).toBe(0);
  });

  it("survives closing the database between the write and the push", async () => {
    const user = crypto.randomUUID();
    const first = openLocalDb(user);
    await addReadings(first, 6);
    first.close();
    const again = openLocalDb(user);
    expect(await waitingCount(again)).toBe(6);
    const s = fakeServer();
    await pushAll(again, s.fetcher);
    expect(s.applied).toEqual([1, 2, 3, 4, 5, 6]);
  });
});
