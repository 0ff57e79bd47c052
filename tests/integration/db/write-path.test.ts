import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { eq, sql } from "drizzle-orm";
import { mailStops, trayItems, users } from "@/db/schema";

/**
 * DEVELOPERS.md "One write path", checked at run time against MariaDB (db/write-path.ts): with
 * LASHWRIGHT_CHECK_WRITES=1, as in the test servers, a statement that changes a record table
 * outside the applier table and the named write services is refused before it reaches the
 * database, and the same change made through them goes in. The modules are loaded after the switch
 * is set: the pool reads it when it is made, the marks when their module loads.
 */
type Mods = {
  conn: typeof import("@/db/connection");
  wp: typeof import("@/db/write-path");
  appliers: typeof import("@/server/appliers");
  write: typeof import("@/server/write");
  changes: typeof import("@/server/account-changes");
  clubs: typeof import("@/server/clubs");
  users: typeof import("@/db/queries/users");
  garage: typeof import("@/db/queries/garage");
  versions: typeof import("@/db/versions");
};
let m: Mods;
let logged: ReturnType<typeof vi.spyOn>;

beforeAll(async () => {
  process.env.DB_POOL_SIZE = "1";
  process.env.DB_ACQUIRE_TIMEOUT_MS = "2000";
  vi.stubEnv("LASHWRIGHT_CHECK_WRITES", "1");
  m = {
    conn: await import("@/db/connection"),
    wp: await import("@/db/write-path"),
    appliers: await import("@/server/appliers"),
    write: await import("@/server/write"),
    changes: await import("@/server/account-changes"),
    clubs: await import("@/server/clubs"),
    users: await import("@/db/queries/users"),
    garage: await import("@/db/queries/garage"),
    versions: await import("@/db/versions"),
  };
  logged = vi.spyOn(console, "error").mockImplementation(() => undefined);
});
afterAll(async () => {
  logged.mockRestore();
  vi.unstubAllEnvs();
  await m.conn.closeDb();
});

async function newUser() {
  const id = await m.changes.newAccount({
    email: `guard-${crypto.randomUUID()}@example.test`,
    name: "guard",
    passwordHash: "not-a-hash",
  });
  return (await m.users.getPublicUser(id))!;
}
const tray = (id: string) => ({ id, size: 2.5, measuredSize: false, count: 3, shimDiameter: null });
const trayRow = async (id: string) => (await m.conn.db().select().from(trayItems).where(eq(trayItems.id, id)))[0];
/** How a promise ended: "applied", the guard's refusal, or anything else as itself. */
const outcome = (p: Promise<unknown>) =>
  p.then(
    () => "applied",
    (e: unknown) => {
      const chain = [e, (e as { cause?: unknown }).cause];
      return chain.some((x) => x instanceof m.wp.OutsideWritePath) ? "outside the write path" : String(e);
    },
  );

describe("the write path, checked at run time (LASHWRIGHT_CHECK_WRITES=1)", () => {
  it("a tray item written through the applier table goes in", async () => {
    const user = await newUser();
    const id = crypto.randomUUID();
    expect(await outcome(m.write.write(user, (w) => m.appliers.apply(w, "tray.put/1", tray(id))))).toBe("applied");
    expect((await trayRow(id))?.count).toBe(3);
  });

  it("the same write inside write() but beside the table (a query passed as a value) is refused, and nothing stays", async () => {
    const user = await newUser();
    const id = crypto.randomUUID();
    // what a route could do: the write context is open, the applier table is not in the way
    const sideDoor = (w: { tx: Parameters<typeof m.garage.putTrayItem>[0]; version: number }) =>
      m.garage.putTrayItem(w.tx, user.id, w.version, id, tray(id));
    logged.mockClear();
    expect(await outcome(m.write.write(user, (w) => sideDoor(w)))).toBe("outside the write path");
    expect(await trayRow(id)).toBeUndefined();
    // the offending stack is in the log, naming where the write came from
    const line = String(logged.mock.calls.at(-1)?.[0]);
    expect(line).toContain(m.wp.OUTSIDE_MARK);
    expect(line).toContain("tray_items");
    expect(line).toContain("write-path.test.ts");
  });

  it("a record table changed through the pool or a transaction of its own, by drizzle or by raw SQL, is refused", async () => {
    const user = await newUser();
    const rename = m.conn
      .db()
      .update(users)
      .set({ name: "renamed" })
      .where(eq(users.id, user.id))
      .then(() => undefined);
    expect(await outcome(rename)).toBe("outside the write path");
    expect(
      await outcome(m.conn.transaction((tx) => tx.execute(sql`UPDATE users SET name = 'raw' WHERE id = ${user.id}`))),
    ).toBe("outside the write path");
    expect((await m.users.getPublicUser(user.id))?.name).toBe("guard");
    // through the named service, the same row changes
    await m.changes.changeSettings(user.id, { name: "renamed" });
    expect((await m.users.getPublicUser(user.id))?.name).toBe("renamed");
  });

  it("named services write (clubs; an unsubscribe through the account's changes) and the machinery's tables are free", async () => {
    const user = await newUser();
    expect(await outcome(m.write.write(user, (w) => m.clubs.createClub(w, "Guarded club")))).toBe("applied");
    await m.changes.stopMail(user.email);
    const [me] = await m.conn.db().select({ on: users.noticesByEmail }).from(users).where(eq(users.id, user.id));
    expect(me?.on).toBe(false);
    // infrastructure: a mail stop and a change counter, written with no mark at all
    const email = `stop-${crypto.randomUUID()}@example.test`;
    await m.conn.db().insert(mailStops).values({ email });
    expect(await m.conn.transaction((tx) => m.versions.nextVersion(tx, crypto.randomUUID()))).toBe(1);
  });

  it("the switch is what installs the check: without it the pool is mysql2's own", async () => {
    const checked = m.conn.connectionPool();
    const proto = Object.getPrototypeOf(checked) as { query: unknown; execute: unknown; getConnection: unknown };
    expect(checked.query).not.toBe(proto.query);
    await m.conn.closeDb();
    vi.stubEnv("LASHWRIGHT_CHECK_WRITES", "");
    vi.resetModules();
    const plain = await import("@/db/connection");
    const p = plain.connectionPool();
    expect([p.query, p.execute, p.getConnection]).toEqual([proto.query, proto.execute, proto.getConnection]);
    await plain.closeDb();
  });
});
