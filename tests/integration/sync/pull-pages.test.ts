import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/db/connection";
import { versioned } from "@/db/versions";
import { putCheck, putEngine, putTrayItem, removeTrayItem, writeReadings } from "@/db/queries/garage";
import { insertComment } from "@/db/queries/clubs";
import type { EngineInput, ReadingInput } from "@/lib/schemas/records";
import { Client, signedInClient } from "../../support/api";
import { rawConnection } from "../../support/db";
import { ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { startApp, type App } from "../../support/server";

/**
 * The pull in pages (db/queries/sync.ts): an owner with more rows than one page, two of whose
 * writes hold more rows than fit in what is left of a page (so a page ends inside one version),
 * and rows written, changed and deleted between the pages. The union of the pages must be exactly
 * the owner's rows: each once (a row changed after a page carried it comes again), none missing,
 * the changed ones as they are now.
 */
const PAGE = 1000; // PULL_PAGE_ROWS
const VALVES = ["I", "E"].flatMap((k) => [1, 2, 3, 4].flatMap((c) => [1, 2].map((i) => `${k}${c}.${i}`)));

let app: App;
let phone: Client;
let owner: string;
let engineId: string;
let checkA: string;
let checkB: string;
const trayIds: string[] = [];

const readingsFor = (rounds: number, go: number): ReadingInput[] =>
  Array.from({ length: rounds }, (_, round) =>
    VALVES.map((valve) => ({
      valve,
      round,
      installedStamp: 2.6,
      feelerGo: go,
      feelerNoGo: null,
      method: "feeler" as const,
    })),
  ).flat() as ReadingInput[];

beforeAll(async () => {
  app = await startApp();
  const u = await makeUser("pull-pages");
  owner = u.id;
  phone = await signedInClient(app.url, u);
  [engineId, checkA, checkB] = [crypto.randomUUID(), crypto.randomUUID(), crypto.randomUUID()];
  await versioned(owner, (tx, v) => putEngine(tx, owner, v, engineId, ENGINE_FOUR as EngineInput));
  await versioned(owner, (tx, v) =>
    putCheck(tx, owner, v, checkA, engineId, { odometer: 1000, measuredHot: false, status: "measuring" }),
  );
  await versioned(owner, (tx, v) =>
    putCheck(tx, owner, v, checkB, engineId, { odometer: 2000, measuredHot: false, status: "measuring" }),
  );
  for (let i = 0; i < 30; i++) {
    const id = crypto.randomUUID();
    trayIds.push(id);
    await versioned(owner, (tx, v) =>
      putTrayItem(tx, owner, v, id, { size: 2.5 + i * 0.05, measuredSize: false, count: 1 }),
    );
  }
  // 800 readings in one write (one version), then 640 in another: page one ends inside the second
  await versioned(owner, (tx, v) => writeReadings(tx, owner, v, checkA, readingsFor(50, 0.15)));
  await versioned(owner, (tx, v) => writeReadings(tx, owner, v, checkB, readingsFor(40, 0.18)));
}, 120_000);
afterAll(async () => {
  await app?.stop();
  await closeDb();
});

type Page = {
  cursor: string;
  more?: boolean;
  engines: { id: string }[];
  checks: { id: string }[];
  readings: { id: string; checkId: string; valve: string; round: number; feelerGo: number }[];
  tray: { id: string; count: number }[];
  comments: { id: string }[];
  tombstones: { entity: string; id: string }[];
};

async function pullPage(cursor: string | null): Promise<Page> {
  const r = await phone.post("/api/sync/pull", { cursor });
  expect(r.status).toBe(200);
  return r.json as Page;
}

async function ids(sql: string, args: unknown[]) {
  const db = await rawConnection();
  const [rows] = await db.query(sql, args);
  await db.end();
  return (rows as { id: string }[]).map((r) => r.id).sort();
}

const rowsOf = (p: Page) =>
  p.engines.length + p.checks.length + p.readings.length + p.tray.length + p.comments.length + p.tombstones.length;

describe("the pull in pages", () => {
  it(
    "pages of at most PULL_PAGE_ROWS whose union is every row once, with rows written, changed and deleted between pages",
    { timeout: 120_000 },
    async () => {
      const pages: Page[] = [await pullPage(null)];
      expect(rowsOf(pages[0]!)).toBe(PAGE);
      expect(pages[0]!.more).toBe(true);
      const seenB = new Set(pages[0]!.readings.filter((r) => r.checkId === checkB).map((r) => `${r.valve}#${r.round}`));
      // the first page ended inside the 640 readings of check B, which share one version
      expect(seenB.size).toBeGreaterThan(0);
      expect(seenB.size).toBeLessThan(640);

      // between the pages: new rows, a row not yet pulled changed, a pulled one deleted
      const newTray = Array.from({ length: 5 }, () => crypto.randomUUID());
      for (const id of newTray)
        await versioned(owner, (tx, v) => putTrayItem(tx, owner, v, id, { size: 3, measuredSize: false, count: 7 }));
      const notYet = VALVES.flatMap((valve) => Array.from({ length: 40 }, (_, round) => ({ valve, round }))).find(
        (k) => !seenB.has(`${k.valve}#${k.round}`),
      )!;
      await versioned(owner, (tx, v) =>
        writeReadings(tx, owner, v, checkB, [
          { ...notYet, installedStamp: 2.6, feelerGo: 0.25, feelerNoGo: null, method: "feeler" } as ReadingInput,
        ]),
      );
      const gone = trayIds[3]!;
      expect(pages[0]!.tray.map((t) => t.id)).toContain(gone);
      await versioned(owner, (tx, v) => removeTrayItem(tx, owner, v, gone));
      const commentId = crypto.randomUUID();
      await versioned(
        owner,
        async (tx, v) =>
          void (await insertComment(tx, v, checkA, owner, null, {
            id: commentId,
            body: "written between pages",
            valve: "I1.1",
          })),
      );

      while (pages.at(-1)!.more) {
        pages.push(await pullPage(pages.at(-1)!.cursor));
        expect(pages.length).toBeLessThan(10);
      }
      for (const p of pages) expect(rowsOf(p)).toBeLessThanOrEqual(PAGE);
      expect(pages.length).toBeGreaterThanOrEqual(2);

      const all = <K extends "engines" | "checks" | "readings" | "tray" | "comments">(k: K) =>
        pages.flatMap((p) => p[k] as { id: string }[]).map((r) => r.id);
      const once = (xs: string[]) => expect(xs.length, "no row twice").toBe(new Set(xs).size);
      for (const k of ["engines", "readings", "tray", "comments"] as const) once(all(k));
      // a reading changes its check too (db/queries/garage.ts writeReadings): check B, carried by page
      // one, changed with its reading between pages and comes once more, as it is now; check A once
      expect(all("checks").filter((id) => id === checkA)).toHaveLength(1);
      expect(all("checks").filter((id) => id === checkB)).toHaveLength(2);
      // no gaps: every row the owner has, and the deleted one (pulled before its deletion) with its tombstone
      expect(all("engines").sort()).toEqual(await ids("SELECT id FROM engines WHERE owner_id = ?", [owner]));
      expect([...new Set(all("checks"))].sort()).toEqual(
        await ids("SELECT id FROM checks WHERE owner_id = ?", [owner]),
      );
      expect(all("readings").sort()).toEqual(await ids("SELECT id FROM readings WHERE owner_id = ?", [owner]));
      expect(all("readings")).toHaveLength(800 + 640);
      expect(all("tray").sort()).toEqual(
        [...(await ids("SELECT id FROM tray_items WHERE owner_id = ?", [owner])), gone].sort(),
      );
      expect(all("tray")).toEqual(expect.arrayContaining(newTray));
      expect(all("comments")).toEqual([commentId]);
      expect(pages.flatMap((p) => p.tombstones)).toEqual([expect.objectContaining({ entity: "tray_item", id: gone })]);
      // the reading changed between pages came once, as it is now
      const changed = pages
        .flatMap((p) => p.readings)
        .filter((r) => r.checkId === checkB && r.valve === notYet.valve && r.round === notYet.round);
      expect(changed).toHaveLength(1);
      expect(changed[0]!.feelerGo).toBe(0.25);

      // the last cursor is a plain one: nothing more after it
      expect(pages.at(-1)!.cursor).toMatch(/^o:\d+$/);
      const after = await pullPage(pages.at(-1)!.cursor);
      expect(rowsOf(after)).toBe(0);
      expect(after.more).toBe(false);
      console.log(
        `[pull-pages] ${pages.length} pages of at most ${PAGE} rows: ${pages.map(rowsOf).join(", ")}; every row once, none missing`,
      );
    },
  );

  it("a cursor from the middle of a pull is one the server accepts, and a made-up one is refused", async () => {
    const first = await pullPage(null);
    expect(first.cursor).toMatch(/^o:\d+:\d:[0-9a-f-]{36}$/);
    expect((await phone.post("/api/sync/pull", { cursor: "o:1:x:y" })).status).toBe(422);
    expect((await phone.post("/api/sync/pull", { cursor: "o:1:2:'; DROP TABLE readings;--" })).status).toBe(422);
  });
});
