import "fake-indexeddb/auto";
import { describe, expect, it } from "vitest";
import { unzipSync, strFromU8 } from "fflate";
import { checkCsv } from "@/lib/check/csv";
import { checkPlan, valveViews } from "@/lib/check/derive";
import {
  EXPORT_DATA_ENTRY,
  EXPORT_SCHEMA_VERSION,
  checkFiles,
  engineForScreens,
  foundOf,
  parseExport,
  photoEntryName,
  type ExportDocument,
} from "@/lib/export/schema";
import { phoneExport } from "@/lib/export/offline";
import { openLocalDb } from "@/lib/sync/local-db";
import { feelerReading, localEngine } from "../../support/check-fixture";

// A four-cylinder, 16-valve profile: bands 0.10-0.20 / 0.20-0.30 mm, shims 2.50-3.30 by 0.05 (common practice).
const ENGINE = localEngine({ id: "11111111-1111-4111-8111-111111111111", assembledShim: null, shimPosition: "over" });
const CHECK = {
  id: "22222222-2222-4222-8222-222222222222",
  engineId: ENGINE.id,
  odometer: 12000,
  measuredHot: false,
  status: "planned" as const,
  notes: "cold, 14 °C",
  startedAt: "2024-05-31T12:00:00.000Z",
  closedAt: null,
};
// a tight intake read with blades (0.05 go, 0.08 no-go), its shim by micrometer: from memory
const READING = {
  ...feelerReading("I1.1", 2.8, 0.05, { checkId: CHECK.id, installedMicrometer: 2.79, feelerNoGo: 0.08 }),
  fittedAt: null,
  found: { clearance: "blade" as const, shim: "micrometer" as const },
};

function doc(over: Partial<ExportDocument> = {}): Record<string, unknown> {
  return {
    format: "lashwright-export",
    schemaVersion: EXPORT_SCHEMA_VERSION,
    exportedAt: "2024-06-01T08:00:00.000Z",
    source: "server",
    account: { name: "Test", email: "t@test.example", displayUnit: "mm" },
    engines: [ENGINE],
    checks: [CHECK],
    readings: [READING],
    plans: [],
    comments: [
      {
        id: "33333333-3333-4333-8333-333333333333",
        checkId: CHECK.id,
        valve: "I1.1",
        body: "tight",
        createdAt: "2024-05-31T12:05:00.000Z",
        byMe: true,
        authorName: "Test",
      },
    ],
    commentsElsewhere: [],
    photos: [
      {
        id: "44444444-4444-4444-8444-444444444444",
        checkId: CHECK.id,
        valve: "I1.1",
        commentId: null,
        contentType: "image/jpeg",
        bytes: 1000,
        width: 10,
        height: 10,
        createdAt: null,
        byMe: true,
        file: photoEntryName("44444444-4444-4444-8444-444444444444"),
      },
    ],
    tray: [
      { id: "55555555-5555-4555-8555-555555555555", size: 2.7, measuredSize: false, count: 2, shimDiameter: null },
    ],
    loans: [],
    ...over,
  };
}

describe("the export's schema", () => {
  it("reads a whole document back", () => {
    const r = parseExport(doc());
    expect(r.ok).toBe(true);
    if (r.ok)
      expect(r.doc.readings[0]).toMatchObject({
        valve: "I1.1",
        feelerGo: 0.05,
        found: { clearance: "blade", shim: "micrometer" },
      });
  });

  it("refuses a newer format version as newer, before its schema is looked at", () => {
    const r = parseExport({
      ...doc(),
      schemaVersion: EXPORT_SCHEMA_VERSION + 1,
      engines: "anything a newer version may write",
    });
    expect(r).toEqual({ ok: false, refusal: { kind: "newer", message: expect.stringMatching(/newer Lashwright/) } });
  });

  it("refuses what is not an export, or says no version", () => {
    for (const bad of [
      null,
      [],
      "text",
      { ...doc(), format: "other" },
      { ...doc(), schemaVersion: "1" },
      { ...doc(), schemaVersion: 0 },
    ]) {
      const r = parseExport(bad);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.refusal.kind).toBe("damaged");
    }
  });

  it("refuses a document that breaks the schema, naming where", () => {
    const r = parseExport(doc({ readings: [{ ...READING, feelerNoGo: 0.04 }] }));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.refusal.message).toMatch(/readings\.0/);
    const e = parseExport(doc({ engines: [{ ...ENGINE, firingOrder: [1, 2] }] }));
    expect(e.ok).toBe(false);
  });

  it("refuses ids that do not match: a check of a missing engine, a reading of a missing check, an id twice, a valve the engine lacks", () => {
    const other = "66666666-6666-4666-8666-666666666666";
    const cases: [Partial<ExportDocument>, RegExp][] = [
      [{ checks: [{ ...CHECK, engineId: other }] }, /names engine/],
      [{ readings: [{ ...READING, checkId: other }] }, /names check/],
      [{ engines: [ENGINE, ENGINE] }, /given twice/],
      [{ readings: [READING, READING] }, /twice/],
      [{ readings: [{ ...READING, valve: "I5.1" }] }, /no valve I5\.1/],
      [{ photos: [{ ...(doc().photos as ExportDocument["photos"])[0]!, commentId: other }] }, /names comment/],
      [
        { photos: [{ ...(doc().photos as ExportDocument["photos"])[0]!, file: photoEntryName(other) }] },
        /not its own file/,
      ],
    ];
    for (const [over, why] of cases) {
      const r = parseExport(doc(over));
      expect(r.ok, String(why)).toBe(false);
      if (!r.ok) expect(r.refusal.message).toMatch(why);
    }
  });

  it("says how a reading was found from its stored fields", () => {
    expect(
      foundOf({ method: "typed", feelerGo: null, measured: 0.12, installedMicrometer: null, installedStamp: 2.6 }),
    ).toEqual({ clearance: "typed", shim: "stamp" });
    expect(
      foundOf({ method: "feeler", feelerGo: null, measured: null, installedMicrometer: null, installedStamp: null }),
    ).toEqual({ clearance: null, shim: null });
  });

  it("writes each check's CSV with the Download CSV code, byte for byte", () => {
    const r = parseExport(doc());
    if (!r.ok) throw new Error("fixture");
    const d = r.doc;
    const f = checkFiles(d.engines[0]!, d.checks[0]!, d.readings, d.tray, null);
    const e = engineForScreens(d.engines[0]!);
    const views = valveViews(e, [{ ...READING }], () => null);
    const plan = checkPlan(e, views, [{ ...d.tray[0]! }]);
    expect(f.csv).toBe(
      checkCsv(
        { engine: "Test four", odometer: 12000, odometerUnit: "km", date: "2024-05-31", shimPosition: "over" },
        views,
        plan,
      ),
    );
    expect(f.csvName).toBe("csv/22222222-test-four-2024-05-31-12000km.csv");
    expect(f.plan?.assignments.map((a) => a.valve)).toEqual(["I1.1"]);
  });
});

describe("the phone's export", () => {
  it("makes the same kind of file from the local copy, listing photos it does not hold as not included", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await db.engines.put({ ...ENGINE });
    await db.checks.put({ ...CHECK });
    const reading: Partial<typeof READING> = { ...READING };
    delete reading.found;
    delete reading.fittedAt;
    await db.readings.put(reading as Parameters<typeof db.readings.put>[0]);
    await db.tray.put({ ...(doc().tray as ExportDocument["tray"])[0]! });
    const photoId = crypto.randomUUID();
    await db.photos.put({
      id: photoId,
      checkId: CHECK.id,
      valve: "I1.1",
      commentId: null,
      blob: new Blob([new Uint8Array([0xff, 0xd8, 0xff, 1, 2, 3])], { type: "image/jpeg" }),
      takenAt: Date.UTC(2024, 4, 31),
      state: "sent",
    });
    const serverOnly = {
      id: crypto.randomUUID(),
      checkId: CHECK.id,
      valve: null,
      commentId: null,
      width: 10,
      height: 10,
      bytes: 99,
      uploaderId: "someone-else",
      uploaderName: "Other",
      createdAt: "2024-05-31T12:00:00.000Z",
    };
    const out = await phoneExport({
      db,
      user: { id: "u", name: "Test", email: "t@test.example", displayUnit: "mm" },
      knownPhotos: [serverOnly],
      now: new Date("2024-06-01T08:00:00.000Z"),
    });
    expect(out.fileName).toBe("lashwright-phone-export-2024-06-01.zip");
    expect(out.photosNotIncluded).toBe(1);
    const files = unzipSync(new Uint8Array(await out.blob.arrayBuffer()));
    expect(Object.keys(files).sort()).toEqual(
      [EXPORT_DATA_ENTRY, "csv/22222222-test-four-2024-05-31-12000km.csv", photoEntryName(photoId)].sort(),
    );
    const parsed = parseExport(JSON.parse(strFromU8(files[EXPORT_DATA_ENTRY]!)));
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(parsed.doc.source).toBe("phone");
    expect(parsed.doc.readings).toEqual([{ ...READING, fittedAt: null }]);
    expect(parsed.doc.photos.find((p) => p.id === serverOnly.id)).toMatchObject({ file: null, byMe: false });
    expect([...files[photoEntryName(photoId)]!]).toEqual([0xff, 0xd8, 0xff, 1, 2, 3]);
    db.close();
  });
});
