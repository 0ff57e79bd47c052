import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, inArray, sql } from "drizzle-orm";
import { closeDb, db } from "@/db/connection";
import { readingHistory, readings } from "@/db/schema";
import { getPublicUser, type PublicUser } from "@/db/queries/users";
import { newAccount } from "@/server/account-changes";
import { push, type PushResult } from "@/server/sync";
import { READING_VALUE_FIELDS } from "@/lib/schemas/records";
import { ENGINE_FOUR } from "@/tests/support/fixtures";

/**
 * The sync push (server/sync.ts) straight against MariaDB, on a pool of one connection, so that
 * every statement a push sends is counted on that connection. Two things are pinned: a run of
 * readings with some refused in it ends exactly as the same readings sent one push each (rows,
 * history, refusals, and a replay), and the statements a push takes do not grow with the number
 * of readings in it, refused ones or not.
 */
beforeAll(() => {
  process.env.DB_POOL_SIZE = "1";
  process.env.DB_ACQUIRE_TIMEOUT_MS = "2000";
  // these pushes are a test's, not a phone's: the write budget is not what is measured here
  process.env.SYNC_WRITES_PER_MINUTE = "10000000";
});
afterAll(() => closeDb());

const VALVES = ["I1.1", "I1.2", "E1.1", "E1.2", "I2.1", "I2.2", "E2.1", "E2.2"];

type Mutation = { id: number; name: string; args: unknown };

async function newUser(): Promise<PublicUser> {
  const id = await newAccount({
    email: `pusher-${crypto.randomUUID()}@example.test`,
    name: "pusher",
    passwordHash: "x",
  });
  return (await getPublicUser(id))!;
}

/** An owner with one engine and `checks` checks on it, pushed from a device of their own. */
async function garage(checks: number) {
  const user = await newUser();
  const engineId = crypto.randomUUID();
  const checkIds = Array.from({ length: checks }, () => crypto.randomUUID());
  const clientId = crypto.randomUUID();
  const setup = [
    { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId } },
    ...checkIds.map((c, i) => ({ id: i + 2, name: "check.put/1", args: { id: c, engineId, odometer: 1000 } })),
  ];
  expect((await push(user, { clientId, mutations: setup })).rejected).toEqual([]);
  return { user, checkIds, clientId, next: setup.length + 1 };
}

const reading = (checkId: string, r: Record<string, unknown>) => ({
  name: "reading.put/1",
  args: { checkId, reading: { method: "feeler", ...r } },
});

/** Statements this connection sent while `fn` ran (the pool holds one connection: every one of the push's). */
async function statements(fn: () => Promise<unknown>): Promise<number> {
  const probe = async () => {
    const [rows] = (await db().execute(
      sql`SELECT CONNECTION_ID() AS conn, VARIABLE_VALUE AS q FROM information_schema.SESSION_STATUS WHERE VARIABLE_NAME = 'QUESTIONS'`,
    )) as unknown as [{ conn: number; q: string }[]];
    return { conn: Number(rows[0]!.conn), q: Number(rows[0]!.q) };
  };
  const a = await probe();
  await fn();
  const b = await probe();
  expect(b.conn).toBe(a.conn);
  // the second probe counts itself
  return b.q - a.q - 1;
}

/** A check's readings by valve and round: what they say, whether a shim was fitted, and what each replaced. */
async function stateOf(checkId: string) {
  const rows = await db().select().from(readings).where(eq(readings.checkId, checkId));
  const history = rows.length
    ? await db()
        .select()
        .from(readingHistory)
        .where(
          inArray(
            readingHistory.readingId,
            rows.map((r) => r.id),
          ),
        )
    : [];
  const out: Record<string, unknown> = {};
  for (const r of rows)
    out[`${r.valve}#${r.round}`] = {
      values: Object.fromEntries(READING_VALUE_FIELDS.map((f) => [f, r[f]])),
      fitted: r.fittedAt !== null,
      // order within one statement is not kept by replaced_at (the same millisecond): compared as a set
      replaced: history
        .filter((h) => h.readingId === r.id)
        .map((h) => JSON.stringify(h.previous))
        .sort(),
    };
  return out;
}

describe("the sync push against the database", () => {
  it("a run of readings with refusals in it, a valve sent twice and a replay ends as the same readings sent one push each", async () => {
    const { user, checkIds, clientId, next } = await garage(2);
    const [together, alone] = checkIds as [string, string];
    // readings already there, so that the run replaces some (and their values reach the history)
    const before = (c: string) => [
      reading(c, { valve: "I1.1", installedStamp: 2.6, feelerGo: 0.08 }),
      reading(c, { valve: "E1.2", installedStamp: 2.7, feelerGo: 0.2 }),
    ];
    const after = (c: string) => [
      reading(c, { valve: "I1.1", installedStamp: 2.6, feelerGo: 0.1 }),
      // outside the engine's shims (2.5 to 3.3 mm, and the range check's slack): refused, mid-run
      reading(c, { valve: "I1.2", installedStamp: 9.9, feelerGo: 0.1 }),
      reading(c, { valve: "E1.1", installedStamp: 2.6, feelerGo: 0.25 }),
      // the same valve and round again: the value it replaces is the one just written
      reading(c, { valve: "I1.1", installedStamp: 2.6, feelerGo: 0.12 }),
      // no such valve on a four-cylinder engine: refused by the engine
      reading(c, { valve: "E9.1", installedStamp: 2.6, feelerGo: 0.25 }),
      // refused by the schema (the no-go blade thinner than the go): it splits the run in two
      reading(c, { valve: "I2.1", installedStamp: 2.6, feelerGo: 0.2, feelerNoGo: 0.1 }),
      reading(c, { valve: "E1.2", installedStamp: 2.7, feelerGo: 0.22, fittedShim: 2.65 }),
      reading(c, { valve: "E1.2", installedStamp: 2.65, feelerGo: 0.27, fittedShim: 3.5 }),
      reading(c, { valve: "I1.1", installedStamp: 2.6, feelerGo: 0.14 }),
      reading(c, { valve: "I2.2", round: 1, installedStamp: 2.55, feelerGo: 0.15 }),
    ];
    const numbered = (ms: { name: string; args: unknown }[], from: number): Mutation[] =>
      ms.map((m, i) => ({ id: from + i, ...m }));

    // one check: everything in two pushes (what was there, then the run)
    await push(user, { clientId, mutations: numbered(before(together), next) });
    const batch = numbered(after(together), next + 2);
    const res = await push(user, { clientId, mutations: batch });

    // the other check, from another device: each reading in a push of its own
    const device = crypto.randomUUID();
    const one: PushResult["rejected"] = [];
    const sent = numbered([...before(alone), ...after(alone)], 1);
    for (const m of sent) one.push(...(await push(user, { clientId: device, mutations: [m] })).rejected);

    const reasons = (r: PushResult["rejected"]) => r.map(({ name, reason }) => ({ name, reason }));
    expect(res.lastMutationId).toBe(batch.at(-1)!.id);
    expect(res.rejected.map((r) => r.id)).toEqual([next + 3, next + 6, next + 7, next + 9]);
    expect(reasons(res.rejected)).toEqual(reasons(one));
    expect(await stateOf(together)).toEqual(await stateOf(alone));
    expect(Object.keys(await stateOf(together)).sort()).toEqual(["E1.1#0", "E1.2#0", "I1.1#0", "I2.2#1"]);

    // sent again (its answer lost): nothing applied twice, the same refusals said again
    const state = await stateOf(together);
    expect(await push(user, { clientId, mutations: batch })).toEqual(res);
    expect(await stateOf(together)).toEqual(state);
  });

  it("the statements of a push do not grow with the readings in it, with or without one refused", async () => {
    const { user, checkIds, clientId } = await garage(4);
    let id = 100;
    // `n` new readings of one check; with `bad`, the one at that place is outside the engine's shims
    const run = (checkId: string, n: number, bad?: number): Mutation[] =>
      Array.from({ length: n }, (_, i) => ({
        id: ++id,
        ...reading(checkId, {
          valve: VALVES[i % VALVES.length],
          round: Math.floor(i / VALVES.length),
          installedStamp: i === bad ? 9.9 : 2.6,
          feelerGo: 0.1,
        }),
      }));
    const cost = async (mutations: Mutation[], refused: number) => {
      let res: PushResult | undefined;
      const n = await statements(async () => (res = await push(user, { clientId, mutations })));
      expect(res!.rejected).toHaveLength(refused);
      return n;
    };
    const [a, b, c, d] = checkIds as [string, string, string, string];
    const small = await cost(run(a, 20), 0);
    expect(await cost(run(b, 200), 0)).toBe(small);
    const smallRefused = await cost(run(c, 20, 10), 1);
    expect(await cost(run(d, 200, 100), 1)).toBe(smallRefused);
    // a push that refuses nothing: the write budget (device and account: BEGIN, upsert, read, COMMIT
    // each), the device's row read, BEGIN, the device locked, the change version, the check and its
    // engine, the rows being replaced, the upsert, the check's version, the device's last id, COMMIT
    expect(small).toBeLessThanOrEqual(18);
    // one refused: that attempt rolled back, then again with each step in a savepoint, the run's
    // readings checked one at a time against one read of the engine, and the refusal recorded
    expect(smallRefused).toBeLessThanOrEqual(2 * small + 8);
  });
});
