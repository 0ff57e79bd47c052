import { describe, expect, it } from "vitest";
import { signedInClient, type Client } from "../../support/api";
import { countOf } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { appPerFile } from "../../support/per-file";

/**
 * What an attacker tries on the sync push (issue 24, items 4 and 10), with the server's default
 * sizes: at most 200 mutations a push, 600 a minute per device and 1,200 per account
 * (server/sync.ts). References: OWASP ASVS 5.0 V2 Validation and Business Logic (anti-automation),
 * RFC 6585 section 4 (429) and RFC 9110 section 10.2.3 (Retry-After); OWASP Prototype Pollution
 * Prevention Cheat Sheet.
 */
const PER_PUSH = 200;
const PER_DEVICE = 600;
const PER_ACCOUNT = 1200;

const app = appPerFile();

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** An owner with one check of their own, made through the REST routes. */
async function ownerWithCheck(tag: string): Promise<{ c: Client; checkId: string }> {
  const c = await signedInClient(app.url, await makeUser(tag));
  const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await c.post(`/api/engines/${engineId}/checks`, { odometer: 1 })).json.check.id as string;
  return { c, checkId };
}

/** `n` comment.add/1 on the check, numbered from `from` (a device's increasing ids). */
const comments = (checkId: string, from: number, n: number) =>
  Array.from({ length: n }, (_, i) => ({
    id: from + i,
    name: "comment.add/1",
    args: { id: crypto.randomUUID(), checkId, body: `spam ${from + i}`, valve: null },
  }));

const commentIds = (ms: { args: { id: string } }[]) => ms.map((m) => m.args.id);
const stored = (checkId: string) => countOf("SELECT COUNT(*) AS n FROM comments WHERE check_id = ?", [checkId]);
const storedOf = async (ids: string[]) => countOf("SELECT COUNT(*) AS n FROM comments WHERE id IN (?)", [ids]);

describe("a push that grows without bound (issue 24 item 4)", () => {
  it("500 comment.add/1 in one push are refused whole (422) and none is applied", async () => {
    const { c, checkId } = await ownerWithCheck("push-500");
    const ms = comments(checkId, 1, 500);
    const res = await c.post("/api/sync/push", { clientId: crypto.randomUUID(), mutations: ms });
    expect(res.status).toBe(422);
    expect(res.json.error.message).toMatch(/at most 200 mutations/);
    expect(await stored(checkId)).toBe(0);
  });

  it(
    "comment pushes repeated: the device's, then the account's budget answers 429 with Retry-After, applies nothing refused, and the owner's next push after the wait goes through",
    { timeout: 240_000 },
    async () => {
      const { c, checkId } = await ownerWithCheck("push-flood");
      const pushes: {
        device: string;
        mutations: ReturnType<typeof comments>;
        status: number;
        retryAfter: number | null;
        ms: number;
      }[] = [];
      const send = async (device: string, mutations: ReturnType<typeof comments>) => {
        const t0 = performance.now();
        const res = await c.raw("POST", "/api/sync/push", {
          body: JSON.stringify({ clientId: device, mutations }),
          headers: { "content-type": "application/json" },
        });
        const body = (await res.json()) as { error?: { code: string; message: string } };
        const p = {
          device,
          mutations,
          status: res.status,
          retryAfter: res.headers.get("retry-after") === null ? null : Number(res.headers.get("retry-after")),
          body,
          ms: Math.round(performance.now() - t0),
        };
        pushes.push(p);
        return p;
      };
      // one device: three full pushes fit its budget, the fourth is refused
      const one = crypto.randomUUID();
      for (let i = 0; i < PER_DEVICE / PER_PUSH; i++)
        expect((await send(one, comments(checkId, 1 + i * PER_PUSH, PER_PUSH))).status).toBe(200);
      const refusedOne = await send(one, comments(checkId, 1 + PER_DEVICE, PER_PUSH));
      expect(refusedOne.status).toBe(429);
      expect(refusedOne.body.error?.code).toBe("throttled");
      expect(refusedOne.retryAfter).toBeGreaterThanOrEqual(1);
      expect(refusedOne.retryAfter).toBeLessThanOrEqual(60);
      // new device ids do not escape the account's budget
      const two = crypto.randomUUID();
      for (let i = 0; i < (PER_ACCOUNT - PER_DEVICE) / PER_PUSH; i++)
        expect((await send(two, comments(checkId, 1 + i * PER_PUSH, PER_PUSH))).status).toBe(200);
      const three = crypto.randomUUID();
      const refusedThree = await send(three, comments(checkId, 1, PER_PUSH));
      expect(refusedThree.status).toBe(429);
      expect(refusedThree.retryAfter).toBeGreaterThanOrEqual(1);
      // hammering a spent budget gains nothing
      for (let i = 0; i < 5; i++)
        expect((await send(crypto.randomUUID(), comments(checkId, 1, PER_PUSH))).status).toBe(429);

      // nothing refused was applied: exactly the accepted pushes' comments are stored
      const accepted = pushes.filter((p) => p.status === 200).flatMap((p) => commentIds(p.mutations));
      const refused = pushes.filter((p) => p.status === 429).flatMap((p) => commentIds(p.mutations));
      expect(accepted).toHaveLength(PER_ACCOUNT);
      expect(await stored(checkId)).toBe(PER_ACCOUNT);
      expect(await storedOf(refused)).toBe(0);
      // and no refusal was recorded against those mutations: they are still the phone's to send
      expect(
        await countOf("SELECT COUNT(*) AS n FROM rejected_mutations WHERE client_id IN (?)", [[one, two, three]]),
      ).toBe(0);
      expect(await countOf("SELECT last_mutation_id AS n FROM sync_clients WHERE id = ?", [one])).toBe(PER_DEVICE);

      // the owner's phone waits as asked, then sends the same outbox again: it goes through
      await sleep((Math.max(refusedOne.retryAfter!, refusedThree.retryAfter!) + 1) * 1000);
      const again = await send(one, refusedOne.mutations);
      expect(again.status).toBe(200);
      expect(await storedOf(commentIds(refusedOne.mutations))).toBe(PER_PUSH);
      expect(await stored(checkId)).toBe(PER_ACCOUNT + PER_PUSH);
      // a replay of what was applied costs nothing and changes nothing
      expect((await send(one, refusedOne.mutations)).status).toBe(200);
      expect(await stored(checkId)).toBe(PER_ACCOUNT + PER_PUSH);
      console.log(
        `[attacks-push] ${pushes.length} pushes of ${PER_PUSH} comments: ${pushes.filter((p) => p.status === 200).length} applied, ${pushes.filter((p) => p.status === 429).length} refused with 429 (Retry-After ${refusedOne.retryAfter} s, ${refusedThree.retryAfter} s); after the wait the owner's push went through; ms per push (printed, not asserted): ${pushes.map((p) => `${p.status}:${p.ms}`).join(" ")}`,
      );
    },
  );
});

describe("prototype names as mutation names (issue 24 item 10)", () => {
  it("constructor, __proto__, toString, hasOwnProperty and valueOf are refused as unknown changes, and the rest of the push is applied", async () => {
    const { c, checkId } = await ownerWithCheck("push-proto");
    const names = ["constructor", "__proto__", "toString", "hasOwnProperty", "valueOf", "prototype"];
    const clientId = crypto.randomUUID();
    const res = await c.post("/api/sync/push", {
      clientId,
      mutations: [
        ...names.map((name, i) => ({ id: i + 1, name, args: { id: crypto.randomUUID(), checkId } })),
        {
          id: names.length + 1,
          name: "comment.add/1",
          args: { id: crypto.randomUUID(), checkId, body: "after the odd names", valve: null },
        },
      ],
    });
    expect(res.status).toBe(200);
    expect(res.json.lastMutationId).toBe(names.length + 1);
    expect(res.json.rejected).toEqual(
      names.map((name, i) => ({ id: i + 1, name, reason: `unknown change "${name}"` })),
    );
    expect(await stored(checkId)).toBe(1);
    // the server is none the worse: the same names with arguments shaped like a real change
    // (written as JSON text: an object literal's __proto__ would set its prototype, not send a key)
    const hostileArgs = '{"__proto__":{"polluted":true},"constructor":{"prototype":{"polluted":true}}}';
    const body = `{"clientId":"${clientId}","mutations":[${names.map((name, i) => `{"id":${100 + i},"name":${JSON.stringify(name)},"args":${hostileArgs}}`).join(",")}]}`;
    const again = await c.raw("POST", "/api/sync/push", { body, headers: { "content-type": "application/json" } });
    expect(again.status).toBe(200);
    expect(((await again.json()) as { rejected: unknown[] }).rejected).toHaveLength(names.length);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect((await c.get("/api/engines")).status).toBe(200);
  });
});
