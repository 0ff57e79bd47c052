import { afterAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, db, transaction } from "@/db/connection";
import { checks, engines, readings, users } from "@/db/schema";
import { currentVersion, nextVersion } from "@/db/versions";
import { mysqlErrorCode } from "@/db/errors";
import { rawConnection } from "../../support/db";

afterAll(() => closeDb());

async function makeUser(tag: string) {
  const id = crypto.randomUUID();
  await db()
    .insert(users)
    .values({ id, email: `${tag}-${id}@test.example`, name: `Test ${tag}` });
  return id;
}

async function makeEngine(ownerId: string) {
  const [row] = await db()
    .insert(engines)
    .values({
      ownerId,
      name: "Test four",
      cylinders: 4,
      intakePerCylinder: 2,
      exhaustPerCylinder: 2,
      firingOrder: [1, 3, 4, 2],
      intakeMin: 0.1,
      intakeMax: 0.2,
      exhaustMin: 0.2,
      exhaustMax: 0.3,
    })
    .$returningId();
  return row!.id;
}

describe("the schema on a real MariaDB", () => {
  it("stores lengths as exact decimals: micrometer shims and inch blades come back unchanged", async () => {
    const owner = await makeUser("decimals");
    const engineId = await makeEngine(owner);
    const [check] = await db().insert(checks).values({ engineId, ownerId: owner, odometer: 43_812.5 }).$returningId();
    // 0.011 in = 0.2794 mm and 0.0005 in = 0.0127 mm (derived from 1 in = 25.4 mm exactly)
    await db().insert(readings).values({
      checkId: check!.id,
      ownerId: owner,
      valve: "I1.1",
      installedMicrometer: 2.537,
      feelerGo: 0.2794,
      feelerNoGo: 0.3048,
      measured: 0.2794,
    });
    const [r] = await db().select().from(readings).where(eq(readings.checkId, check!.id));
    expect(r).toMatchObject({
      installedMicrometer: 2.537,
      feelerGo: 0.2794,
      feelerNoGo: 0.3048,
      measured: 0.2794,
      round: 0,
    });
    const raw = await rawConnection();
    const [rows] = await raw.query("SELECT CAST(feeler_go AS CHAR) AS go FROM readings WHERE check_id = ?", [
      check!.id,
    ]);
    await raw.end();
    expect((rows as { go: string }[])[0]!.go).toBe("0.27940");
  });

  it("refuses a second reading for the same valve and round of a check, and keeps the first", async () => {
    const owner = await makeUser("unique");
    const engineId = await makeEngine(owner);
    const [check] = await db().insert(checks).values({ engineId, ownerId: owner, odometer: 1000 }).$returningId();
    await db().insert(readings).values({ checkId: check!.id, ownerId: owner, valve: "E2.1", measured: 0.25 });
    const err = await db()
      .insert(readings)
      .values({ checkId: check!.id, ownerId: owner, valve: "E2.1", measured: 0.3 })
      .catch((e: unknown) => e);
    expect(mysqlErrorCode(err)).toBe("ER_DUP_ENTRY");
    const rows = await db().select().from(readings).where(eq(readings.checkId, check!.id));
    expect(rows.map((r) => r.measured)).toEqual([0.25]);
  });

  it("refuses an out-of-range length instead of truncating it (strict mode)", async () => {
    const owner = await makeUser("strict");
    const engineId = await makeEngine(owner);
    const [check] = await db().insert(checks).values({ engineId, ownerId: owner, odometer: 1000 }).$returningId();
    const err = await db()
      .insert(readings)
      .values({ checkId: check!.id, ownerId: owner, valve: "I1.1", measured: 12345.5 })
      .catch((e: unknown) => e);
    expect(mysqlErrorCode(err)).toBe("ER_WARN_DATA_OUT_OF_RANGE");
    expect(await db().select().from(readings).where(eq(readings.checkId, check!.id))).toEqual([]);
  });

  it("stores text in utf8mb4, and deleting an engine removes its checks and readings", async () => {
    const owner = await makeUser("cascade");
    const engineId = await makeEngine(owner);
    await db().update(engines).set({ name: "Zweizylinder ⚙️ «Ölfleck»" }).where(eq(engines.id, engineId));
    const [e] = await db().select({ name: engines.name }).from(engines).where(eq(engines.id, engineId));
    expect(e!.name).toBe("Zweizylinder ⚙️ «Ölfleck»");
    const [check] = await db().insert(checks).values({ engineId, ownerId: owner, odometer: 5 }).$returningId();
    await db().insert(readings).values({ checkId: check!.id, ownerId: owner, valve: "I1.1", measured: 0.15 });
    await db().delete(engines).where(eq(engines.id, engineId));
    expect(await db().select().from(readings).where(eq(readings.checkId, check!.id))).toEqual([]);
  });

  it("hands out each owner's change versions one by one, and a rolled-back write takes its number back", async () => {
    const [owner, other] = [await makeUser("versions"), await makeUser("versions-other")];
    const take = (id: string) => transaction((tx) => nextVersion(tx, id));
    expect([await take(owner), await take(owner), await take(other), await take(owner)]).toEqual([1, 2, 1, 3]);
    const err = await transaction(async (tx) => {
      expect(await nextVersion(tx, owner)).toBe(4);
      throw new Error("refused");
    }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(Error);
    expect(await transaction((tx) => currentVersion(tx, owner))).toBe(3);
    expect(await take(owner)).toBe(4);
  });
});
