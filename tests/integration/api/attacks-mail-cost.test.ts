import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type mysql from "mysql2/promise";
import { signedInClient } from "../../support/api";
import { countOf, rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { startApp, type App } from "../../support/server";

/**
 * The notice work of a push, counted rather than timed (issue 24, item 4: each comment re-read the
 * whole thread for its notice, so a push of 500 comments grew with the square of its size). What a
 * push runs after its commit (server/write.ts runAfter: one notice per comment) is run here in this
 * process on a pool of one connection, and every statement it sends is counted; the rows the server
 * read (SHOW SESSION STATUS Handler_read_*, on that one connection) are printed beside them, not
 * asserted, since they include the queue's claims, whose number depends on timing. Its notices are
 * held for 10 minutes, so none of them is sent while it is counted.
 */
process.env.DB_POOL_SIZE = "1";
process.env.NOTICE_DIGEST_SECONDS = "600";

let app: App;
let raw: mysql.Connection;
let check: { id: string; ownerId: string };
let owner: { id: string; name: string };
let mentorEmail: string;

beforeAll(async () => {
  app = await startApp({ NOTICE_DIGEST_SECONDS: "2" });
  raw = await rawConnection();
  const [o, m] = await Promise.all([makeUser("cost-owner"), makeUser("cost-mentor")]);
  const oc = await signedInClient(app.url, o);
  const clubId = (await oc.post("/api/clubs", { name: "Cost club" })).json.club.id as string;
  await addMembership(clubId, m.id, ["mentor"]);
  const engineId = (await oc.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
  const checkId = (await oc.post(`/api/engines/${engineId}/checks`, { odometer: 1 })).json.check.id as string;
  await oc.post(`/api/checks/${checkId}/shares`, { clubId });
  const mc = await signedInClient(app.url, m);
  // the mentor has taken part, with a long thread: a comment of the owner's goes to them
  for (let i = 0; i < 30; i++)
    expect((await mc.post(`/api/checks/${checkId}/comments`, { body: `mentor remark ${i}` })).status).toBe(201);
  check = { id: checkId, ownerId: o.id };
  owner = { id: o.id, name: "Test cost-owner" };
  mentorEmail = m.email;
}, 120_000);

afterAll(async () => {
  const { closeDb } = await import("@/db/connection");
  await raw?.query("DELETE FROM notices WHERE to_email = ?", [mentorEmail]);
  await raw?.end();
  await closeDb();
  await app?.stop();
});

const dueElsewhere = () =>
  countOf(
    "SELECT COUNT(*) AS n FROM notices WHERE status IN ('queued', 'sending') AND next_attempt_at <= NOW(3) + INTERVAL 20 SECOND",
    [],
    raw,
  );

describe("a push's notices are worked out once", () => {
  it(
    "N comments by the owner: the same statements for 10 as for 200, and one queued notice",
    { timeout: 180_000 },
    async () => {
      const { connectionPool } = await import("@/db/connection");
      const { runAfter } = await import("@/server/write");
      const { noticeNewComment } = await import("@/server/review");
      const { deliverDueNotices } = await import("@/server/notices");
      const p = connectionPool();
      const sent: string[] = [];
      let counting = false;
      for (const m of ["query", "execute"] as const) {
        const original = p[m].bind(p) as (...a: unknown[]) => unknown;
        (p as unknown as Record<string, unknown>)[m] = (...a: unknown[]) => {
          if (counting) sent.push(typeof a[0] === "string" ? a[0] : String((a[0] as { sql?: string }).sql));
          return original(...a);
        };
      }
      const reads = async () => {
        const [rows] = await p.query("SHOW SESSION STATUS LIKE 'Handler_read%'");
        return (rows as { Value: string }[]).reduce((n, r) => n + Number(r.Value), 0);
      };

      const cost = async (n: number) => {
        // nothing of anyone else's falls due meanwhile (the app sends what is due within seconds)
        await expect.poll(dueElsewhere, { timeout: 60_000, interval: 500 }).toBe(0);
        const [[{ t }]] = (await raw.query("SELECT NOW(3) AS t")) as unknown as [[{ t: Date }]];
        sent.length = 0;
        const r0 = await reads();
        const r1 = await reads();
        counting = true;
        await runAfter(Array.from({ length: n }, (_, i) => () => noticeNewComment(check, owner, `owner remark ${i}`)));
        await deliverDueNotices();
        counting = false;
        const r2 = await reads();
        const [queued] = await raw.query("SELECT COUNT(*) AS n FROM notices WHERE to_email = ? AND created_at >= ?", [
          mentorEmail,
          t,
        ]);
        // the queue's claims (how many runs a kick makes depends on timing) apart from the notice work
        const delivery = sent.filter((q) => !/^\s*insert/i.test(q) && /claim_token/.test(q));
        return {
          statements: sent.length - delivery.length,
          delivery: delivery.length,
          rowsRead: r2 - r1 - (r1 - r0),
          queued: Number((queued as { n: number }[])[0]!.n),
          sql: [...sent],
        };
      };

      const small = await cost(10);
      const large = await cost(200);
      console.log(
        `[notice cost] 10 comments: ${small.statements} statements (+${small.delivery} claims), ${small.rowsRead} rows read; 200 comments: ${large.statements} statements (+${large.delivery} claims), ${large.rowsRead} rows read`,
      );
      expect(large.statements, large.sql.join("\n")).toBe(small.statements);
      // who took part, who they are, the engine and check the notice names, the insert (and a kick's own)
      expect(large.statements).toBeLessThanOrEqual(5);
      // a run of the queue is two statements (claim, read back), four when it gathers a digest; a kick makes one or two runs
      expect(large.delivery).toBeLessThanOrEqual(8);
      // the 200 notices to the mentor are one queued notice, carrying them all
      expect(small.queued).toBe(1);
      expect(large.queued).toBe(1);
    },
  );
});
