import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { openLocalDb } from "@/lib/sync/local-db";
import { waitingCount } from "@/lib/sync/outbox";
import { queuePhoto } from "@/lib/sync/photos";
import { getMeta } from "@/lib/sync/local-db";
import { Offline, retryAfterMs, retryDelay, ServerBusy, syncOnce } from "@/lib/sync/phone-sync";
import { postJson, send } from "@/lib/sync/transport";
import { EMPTY_PAGE, queueReading } from "../../support/phone-sync";

const checkId = "0b6f5c2e-2222-4a4a-9a9a-000000000002";
const emptyPull = { cursor: 7, ...EMPTY_PAGE };

const oneReading = (db: ReturnType<typeof openLocalDb>) =>
  queueReading(db, checkId, { valve: "I1.1", round: 0, feelerGo: 0.15 });

/** A 200 JSON answer whose body stops after `text`: the instance died mid-answer. */
const cutAfter = (text: string) => async () =>
  new Response(
    new ReadableStream({
      start(c) {
        c.enqueue(new TextEncoder().encode(text));
        c.error(new TypeError("terminated"));
      },
    }),
    { status: 200, headers: { "content-type": "application/json" } },
  );

describe("the phone's transport", () => {
  it("calls only a request with no answer offline", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await oneReading(db);
    await expect(syncOnce(db, async () => Promise.reject(new TypeError("Failed to fetch")))).rejects.toBeInstanceOf(
      Offline,
    );
    // an answer that arrives but makes the phone's own code fail is not "offline"
    const garbled = async (url: string) =>
      url.endsWith("/push")
        ? Response.json({ lastMutationId: 1, rejected: [] })
        : new Response("{ not json", { status: 200 });
    const e = await syncOnce(db, garbled).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(Error);
    expect(e).not.toBeInstanceOf(Offline);
  });

  it("an answer cut off half-way (the instance died mid-answer) is offline, and the outbox stays", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await oneReading(db);
    const cut = cutAfter('{"lastMutationId":1,"rej');
    await expect(syncOnce(db, cut)).rejects.toBeInstanceOf(Offline);
    expect(await waitingCount(db)).toBe(1);
  });

  it("a busy server (503 with Retry-After) keeps the outbox and says how long to wait", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await oneReading(db);
    const busy = async () =>
      new Response(JSON.stringify({ error: { code: "overloaded", message: "busy" } }), {
        status: 503,
        headers: { "retry-after": "3" },
      });
    const e = await syncOnce(db, busy).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(ServerBusy);
    expect((e as ServerBusy).retryAfterMs).toBe(3000);
    expect(await waitingCount(db)).toBe(1);
  });

  it("waits at least as long as asked, longer after each busy answer, spread by jitter", () => {
    expect(retryAfterMs("5")).toBe(5000);
    expect(retryAfterMs("Wed, 02 Dec 2026 10:00:10 GMT", Date.parse("Wed, 02 Dec 2026 10:00:00 GMT"))).toBe(10_000);
    expect(retryAfterMs("soon")).toBeNull();
    expect(retryDelay(0, 2000, () => 0)).toBe(2000);
    expect(retryDelay(0, 2000, () => 0.999)).toBeLessThan(4000);
    expect(retryDelay(0, 9000, () => 0)).toBe(9000);
    expect(retryDelay(3, null, () => 0)).toBe(16_000);
    expect(retryDelay(20, null, () => 0)).toBe(60_000);
    // phones turned away together come back at different times
    const spread = new Set(Array.from({ length: 50 }, () => retryDelay(0, 2000)));
    expect(spread.size).toBeGreaterThan(25);
  });

  it("a photo the server fails on stays waiting and does not keep the pull from running", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await queuePhoto(db, { checkId, blob: new Blob([new Uint8Array([0xff, 0xd8, 0xff])], { type: "image/jpeg" }) });
    let pulled = 0;
    const fetcher = async (url: string) => {
      if (url.endsWith("/photos")) return new Response("{}", { status: 500 });
      if (url.endsWith("/pull")) {
        pulled++;
        return Response.json(emptyPull);
      }
      return Response.json({ lastMutationId: 0, rejected: [] });
    };
    const r = await syncOnce(db, fetcher);
    expect(r.photos).toMatchObject({ sent: 0, failed: 1 });
    expect(pulled).toBe(1);
    expect(await getMeta<number>(db, "cursor")).toBe(7);
    expect(await db.photos.where("state").equals("waiting").count()).toBe(1);
  });
});

describe("the phone's bound on one request", () => {
  // a fetcher that never answers unless its signal is aborted, as a garage signal that holds the line open
  const silent = (_url: string, init: RequestInit) =>
    new Promise<Response>((_res, reject) => {
      init.signal?.addEventListener("abort", () => reject(init.signal!.reason));
    });

  it("gives up on a request that gets no answer and calls it offline, keeping the outbox", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await oneReading(db);
    await expect(send(silent, "/api/sync/push", { method: "POST" }, 50)).rejects.toBeInstanceOf(Offline);
    expect(await waitingCount(db)).toBe(1);
  });

  it("calls an answer whose body stops half way offline, not a server error", async () => {
    const cut = cutAfter('{"cursor":');
    await expect(postJson(cut, "/api/sync/pull", {}, "sync/pull")).rejects.toBeInstanceOf(Offline);
  });

  it("keeps the caller's own abort working beside the bound", async () => {
    const ctl = new AbortController();
    const p = send(silent, "/api/sync/pull", { method: "POST", signal: ctl.signal }, 60_000);
    ctl.abort();
    await expect(p).rejects.toBeInstanceOf(Offline);
  });
});
