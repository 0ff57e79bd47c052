import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { openLocalDb, getMeta, type LocalDb } from "@/lib/sync/local-db";
import { waitingCount } from "@/lib/sync/outbox";
import { PUSH_BATCH } from "@/lib/sync/mutations";
import { Offline, ServerBusy, syncOnce } from "@/lib/sync/phone-sync";
import { EMPTY_PAGE, queueReading } from "../../support/phone-sync";

/**
 * The phone against a server that applies a budget (server/sync.ts) and pages its pull
 * (db/queries/sync.ts): work the server refused stays in the outbox and goes later, once, in
 * order; a pull follows the pages to the end, and one cut short goes on from where it stopped.
 */
const checkId = "0b6f5c2e-3333-4a4a-9a9a-000000000003";

async function addReadings(db: LocalDb, n: number) {
  for (let i = 0; i < n; i++)
    await queueReading(db, checkId, { valve: `I${(i % 4) + 1}.${(i % 2) + 1}`, round: i % 50, feelerGo: 0.1 });
}

/** A push that takes `budget` mutations, then answers 429 with Retry-After until given more. */
function budgetedServer(budget: number) {
  let left = budget;
  let last = 0;
  const applied: number[] = [];
  const pushSizes: number[] = [];
  let pulls = 0;
  const fetcher = async (url: string, init: RequestInit) => {
    const body = JSON.parse(String(init.body));
    if (url.endsWith("/api/sync/pull")) {
      pulls++;
      return Response.json({ cursor: "o:1", more: false, ...EMPTY_PAGE });
    }
    const ms = body.mutations as { id: number }[];
    pushSizes.push(ms.length);
    const fresh = ms.filter((m) => m.id > last);
    if (fresh.length > left)
      return Response.json(
        { error: { code: "throttled", message: "Too many changes" } },
        { status: 429, headers: { "retry-after": "37" } },
      );
    left -= fresh.length;
    for (const m of fresh) applied.push(m.id);
    last = Math.max(last, ...ms.map((m) => m.id));
    return Response.json({ lastMutationId: last, rejected: [] });
  };
  return { fetcher, applied, pushSizes, pulls: () => pulls, refill: (n: number) => (left = n) };
}

describe("the write budget, from the phone", () => {
  it("a push refused with 429 keeps the refused work in the outbox, says how long to wait, and sends it later once, in order", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await addReadings(db, 450);
    const s = budgetedServer(PUSH_BATCH);
    const e = await syncOnce(db, s.fetcher).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ServerBusy);
    expect((e as ServerBusy).status).toBe(429);
    expect((e as ServerBusy).retryAfterMs).toBe(37_000);
    // the first batch was acknowledged and left the outbox; the refused rest is kept, untouched
    expect(s.applied).toEqual(Array.from({ length: PUSH_BATCH }, (_, i) => i + 1));
    expect(await waitingCount(db)).toBe(450 - PUSH_BATCH);
    expect((await db.outbox.orderBy("mutationId").first())!.mutationId).toBe(PUSH_BATCH + 1);
    expect(await db.readings.count()).toBeGreaterThan(0);
    // the phone sends in batches no longer than the server takes
    expect(Math.max(...s.pushSizes)).toBeLessThanOrEqual(PUSH_BATCH);
    // and nothing is recorded as refused by the server: the work is waiting, not lost
    expect((await getMeta(db, "rejected")) ?? []).toEqual([]);

    // after the wait the budget has room again
    s.refill(10_000);
    await syncOnce(db, s.fetcher);
    expect(s.applied).toEqual(Array.from({ length: 450 }, (_, i) => i + 1));
    expect(await waitingCount(db)).toBe(0);
  });
});

describe("the pull in pages, from the phone", () => {
  /** Pages of tray rows: cursors "o:1:3:<n>" in between, "o:9" at the end. */
  function pagedServer(total: number, perPage: number) {
    const asked: (string | null)[] = [];
    let failOn: number | null = null;
    const fetcher = async (url: string, init: RequestInit) => {
      if (url.endsWith("/api/sync/push")) return Response.json({ lastMutationId: 0, rejected: [] });
      const { cursor } = JSON.parse(String(init.body)) as { cursor: string | null };
      asked.push(cursor);
      if (failOn !== null && asked.length === failOn) throw new TypeError("Failed to fetch");
      const start = cursor === null ? 0 : Number(cursor.split(":")[3]);
      const end = Math.min(total, start + perPage);
      const tray = Array.from({ length: end - start }, (_, i) => ({
        id: `00000000-0000-4000-8000-${String(start + i).padStart(12, "0")}`,
        size: 2.5,
        measuredSize: false,
        count: 1,
        shimDiameter: null,
      }));
      const more = end < total;
      return Response.json({ ...EMPTY_PAGE, tray, cursor: more ? `o:1:3:${end}` : "o:9", more });
    };
    return { fetcher, asked, failOn: (n: number) => (failOn = n) };
  }

  it("follows the pages to the end and keeps the final cursor", async () => {
    const db = openLocalDb(crypto.randomUUID());
    const s = pagedServer(2500, 1000);
    const r = await syncOnce(db, s.fetcher);
    expect(s.asked).toEqual([null, "o:1:3:1000", "o:1:3:2000"]);
    expect(r.pulled.pages).toBe(3);
    expect(await db.tray.count()).toBe(2500);
    expect(await getMeta(db, "cursor")).toBe("o:9");
  });

  it("a pull cut short keeps what it got and goes on from there at the next sync", async () => {
    const db = openLocalDb(crypto.randomUUID());
    const s = pagedServer(2500, 1000);
    s.failOn(2);
    await expect(syncOnce(db, s.fetcher)).rejects.toBeInstanceOf(Offline);
    expect(await db.tray.count()).toBe(1000);
    expect(await getMeta(db, "cursor")).toBe("o:1:3:1000");
    await syncOnce(db, s.fetcher);
    expect(s.asked).toEqual([null, "o:1:3:1000", "o:1:3:1000", "o:1:3:2000"]);
    expect(await db.tray.count()).toBe(2500);
  });
});
