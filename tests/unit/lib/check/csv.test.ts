import "fake-indexeddb/auto";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { checkCsv, csvFileName, decimalsFor } from "@/lib/check/csv";
import { readChecksCsv } from "@/lib/check/csv-import";
import { checkPlan, valveViews } from "@/lib/check/derive";
import { engineHistory } from "@/lib/check/history";
import { openLocalDb } from "@/lib/sync/local-db";
import { importChecks } from "@/lib/sync/save";
import { feelerReading, localEngine } from "../../support/check-fixture";

// An invented four (test data, not trade data): 2 intakes and 2 exhausts per cylinder, intake
// 0.10-0.20, exhaust 0.20-0.30, a 0.05 mm series from 2.50 to 3.30.
const four = localEngine();
const reading = feelerReading;
const TODAY = "2026-12-02";
const rowsOf = (csv: string) => Papa.parse<Record<string, string>>(csv.trim(), { header: true }).data;

describe("check CSV export", () => {
  it("writes every length with one decimal style and puts the buy list in the same file", () => {
    // I1.1 2.80 + 0.30 - 0.15 (target) = 2.95: a bought 2.95 gives 0.15 (common practice: ideal = installed + measured - target)
    const rs = [reading("I1.1", 2.8, 0.3), reading("I1.2", 2.6, 0.15), reading("E1.1", 2.6, 0.25)];
    const views = valveViews(four, rs, () => 2.6);
    const csv = checkCsv(
      { engine: "Test four", odometer: 12000, odometerUnit: "km", date: "2026-05-30" },
      views,
      checkPlan(four, views, []),
    );
    const rows = rowsOf(csv);
    const i11 = rows.find((r) => r.valve === "I1.1")!;
    expect(i11).toMatchObject({
      record: "valve",
      shim_mm: "2.80",
      clearance_mm: "0.30",
      go_mm: "0.30",
      band_min_mm: "0.10",
      plan_shim_mm: "2.95",
      predicted_mm: "0.15",
      source: "buy",
    });
    // every length cell in the file has exactly two decimals (no "2.8" beside "0.20")
    const lengths = rows.flatMap((r) =>
      Object.entries(r)
        .filter(([k, v]) => k.endsWith("_mm") && v !== "")
        .map(([, v]) => v),
    );
    expect(lengths.length).toBeGreaterThan(20);
    for (const v of lengths) expect(v).toMatch(/^\d+\.\d{2}$/);
    expect(rows.filter((r) => r.record === "buy")).toEqual([
      expect.objectContaining({ plan_shim_mm: "2.95", count: "1", source: "buy" }),
    ]);
    expect(csv.endsWith("\r\n")).toBe(true);
  });

  it("takes more decimals for the whole file only when a value needs them, and quotes and defuses names", () => {
    // 0.003 in = 0.0762 mm exactly (1 in = 25.4 mm): four decimals; a micrometer 2.613: three
    expect(decimalsFor([2.6, 0.2])).toBe(2);
    expect(decimalsFor([2.6, 2.613])).toBe(3);
    expect(decimalsFor([2.6, 0.0762])).toBe(4);
    const rs = [reading("I1.1", 2.6, 0.15, { installedMicrometer: 2.613 })];
    const views = valveViews(four, rs, () => 2.6);
    const csv = checkCsv({ engine: '=Four, "red"', odometer: 1, odometerUnit: "km", date: "2026-05-30" }, views, null);
    const row = rowsOf(csv)[0]!;
    expect(row).toMatchObject({
      engine: `'=Four, "red"`,
      shim_mm: "2.600",
      micrometer_mm: "2.613",
      clearance_mm: "0.150",
    });
  });

  it("says on every row where the engine's shims sit, and reads back the same with the column there", () => {
    const rs = [reading("I1.1", 2.8, 0.3)];
    const views = valveViews(four, rs, () => 2.6);
    const csv = checkCsv(
      { engine: "Test four", odometer: 12000, odometerUnit: "km", date: "2026-05-30", shimPosition: "under" },
      views,
      checkPlan(four, views, []),
    );
    const rows = rowsOf(csv);
    expect(rows.length).toBeGreaterThan(1);
    for (const r of rows) expect(r.shim_position).toBe("under");
    expect(
      rowsOf(checkCsv({ engine: "Test four", odometer: 1, odometerUnit: "km", date: "2026-05-30" }, views, null))[0]!
        .shim_position,
    ).toBe("");
    expect(readChecksCsv(csv, four, [], { today: TODAY }).ok).toBe(true);
  });

  it("names the file after the engine", () => {
    expect(csvFileName("Mara's Four (1983)", "2026-05-30", 12000, "km")).toBe(
      "mara-s-four-1983-2026-05-30-12000km.csv",
    );
    expect(csvFileName("Čelik twin", "2026-05-30", 300, "h")).toBe("celik-twin-2026-05-30-300h.csv");
    expect(csvFileName("***", "2026-05-30", 1, "mi")).toBe("engine-2026-05-30-1mi.csv");
  });
});

describe("importing past checks", () => {
  it("reads its own export back: the same readings, one check", () => {
    const rs = [
      reading("I1.1", 2.8, 0.3),
      reading("E1.1", 2.6, 0.23, { feelerNoGo: 0.25 }),
      reading("E2.2", 2.65, 0.2, { installedMicrometer: 2.641, method: "feeler" }),
    ];
    const views = valveViews(four, rs, () => 2.6);
    const csv = checkCsv(
      { engine: "Test four", odometer: 12000, odometerUnit: "km", date: "2026-05-30" },
      views,
      checkPlan(four, views, []),
    );
    const p = readChecksCsv(csv, four, [], { today: TODAY });
    expect(p.fileErrors).toEqual([]);
    expect(p.ok).toBe(true);
    expect(p.checks).toHaveLength(1);
    expect(p.checks[0]).toMatchObject({ date: "2026-05-30", odometer: 12000 });
    expect(p.checks[0]!.readings).toEqual([
      {
        valve: "I1.1",
        round: 0,
        installedStamp: 2.8,
        installedMicrometer: null,
        feelerGo: 0.3,
        feelerNoGo: null,
        measured: 0.3,
        method: "feeler",
        fittedShim: null,
      },
      {
        valve: "E1.1",
        round: 0,
        installedStamp: 2.6,
        installedMicrometer: null,
        feelerGo: 0.23,
        feelerNoGo: 0.25,
        measured: 0.23,
        method: "feeler",
        fittedShim: null,
      },
      {
        valve: "E2.2",
        round: 0,
        installedStamp: 2.65,
        installedMicrometer: 2.641,
        feelerGo: 0.2,
        feelerNoGo: null,
        measured: 0.2,
        method: "feeler",
        fittedShim: null,
      },
    ]);
    // the 13 valves not yet measured are read and left out, and so are the buy list and the 2.80
    // that goes back to the tray
    expect(p.rows.filter((r) => r.skipped).map((r) => r.skipped)).toEqual([
      ...Array(13).fill("no clearance or go blade: nothing measured, left out"),
      "a buy line of an exported plan: not history, left out",
      "a to tray line of an exported plan: not history, left out",
    ]);
  });

  it("gives each bad row its own reason and refuses the file while any row is bad", () => {
    const csv = [
      "Date,Odometer,Valve,Shim (mm),Clearance (mm),Notes",
      "2024-05-12,12500,I1.1,2.60,0.15,first check",
      "2024-05-12,12500,I9.1,2.60,0.15,",
      "2024-05-12,12500,I1.1,2.60,0.16,",
      "2024-02-30,12500,E1.1,2.60,0.25,",
      "2099-01-01,12500,E1.2,2.60,0.25,",
      "2024-05-12,twelve,E2.1,2.60,0.25,",
      "2024-05-12,12500,E2.2,9.60,0.25,",
      "2024-05-12,12500,E3.1,2.60,,",
      "2024-05-12,12500,E3.2,2.60,4.2,",
      "2024-05-12,12500,X1,2.60,0.2,",
      "",
      "12/05/24,12500,I2.1,2.60,0.15,",
    ].join("\n");
    const p = readChecksCsv(csv, four, [], { today: TODAY });
    expect(p.ok).toBe(false);
    const errors = Object.fromEntries(p.rows.map((r) => [r.row, r.errors.join("; ")]));
    expect(errors[2]).toBe("");
    expect(errors[3]).toBe("Test four has no valve I9.1");
    expect(errors[4]).toBe("I1.1 is already in row 2 for the same check (same date and odometer)");
    expect(errors[5]).toBe('date "2024-02-30" is not in the calendar');
    expect(errors[6]).toBe('date "2099-01-01" lies in the future');
    expect(errors[7]).toBe('odometer "twelve" is not a distance or hours');
    expect(errors[8]).toBe("shim: 9.6 mm is outside this engine's shim range");
    expect(errors[9]).toBe("");
    expect(p.rows.find((r) => r.row === 9)!.skipped).toBe("no clearance or go blade: nothing measured, left out");
    expect(errors[10]).toBe("clearance 4.2 mm is far more than a valve clearance: is the column in another unit?");
    expect(errors[11]).toBe('valve "X1" is not named like I1.1 (intake, cylinder 1, first) or E4.2');
    expect(errors[13]).toBe('date "12/05/24" has a two-digit year: write it in full (2024, not 24)');
    expect(Object.keys(errors)).not.toContain("12"); // the empty line is no row
    expect(p.checks[0]!.notes).toBe("first check");
  });

  it("refuses a file without the columns it needs, and says which", () => {
    const p = readChecksCsv("when,km,which\n2024-01-01,1,I1.1\n", four, [], { today: TODAY });
    expect(p.ok).toBe(false);
    expect(p.fileErrors[0]).toBe(
      'The first row must name the columns; missing: date, valve, clearance. Found: "when", "km", "which".',
    );
    expect(readChecksCsv("", four, []).fileErrors).toEqual(["The file is empty."]);
    expect(
      readChecksCsv('date,odometer,valve,clearance\n"2024-01-01,1,I1.1,0.1\n', four, [], { today: TODAY }).fileErrors,
    ).toContain("A quoted cell is not closed (from row 2).");
  });

  it("reads a semicolon file with decimal commas, inch columns, and day-first dates", () => {
    // 0.006 in = 0.1524 mm and 0.110 in = 2.794 mm exactly (1 in = 25.4 mm)
    const csv =
      "date;odometer;valve;shim_in;clearance_thou;record\n31/05/2024;12.500;I1.1;0,110;6;valve\n03/06/2024;13.000,5;E1.1;0,102;10;\n01/06/2024;1;I1.1;0,11;6;buy\n";
    const p = readChecksCsv(csv, four, [], { today: TODAY });
    expect(p.fileErrors).toEqual([]);
    expect(p.dateOrder).toBe("dmy");
    expect(p.dateOrderOpen).toBe(false);
    expect(
      p.checks.map((c) => [
        c.date,
        c.odometer,
        c.readings[0]!.installedStamp,
        c.readings[0]!.measured,
        c.readings[0]!.method,
      ]),
    ).toEqual([
      ["2024-05-31", 12500, 2.794, 0.1524, "typed"],
      ["2024-06-03", 13000.5, 2.5908, 0.254, "typed"],
    ]);
    expect(p.rows[2]!.skipped).toMatch(/buy line/);
    expect(p.ok).toBe(true);
  });

  it("reads numbers through the one decimal parser, with the file's own comma rules", () => {
    const cells = (csv: string) =>
      readChecksCsv(csv, four, [], { today: TODAY }).rows.map((r) => (r.errors.length ? r.errors.join("; ") : "ok"));
    // a comma file: a length's comma is always decimal; a trailing one, a sign or an exponent is no number
    expect(
      cells(
        'date,odometer,valve,shim_mm,clearance_mm\n2024-01-01,100,I1.1,2.6,"0,25"\n2024-01-02,101,I1.1,"2,",0.2\n2024-01-03,102,I1.1,2.6,-0.2\n2024-01-04,103,I1.1,2.6,2e-1\n2024-01-05,"12,5",I1.1,2.6,0.2\n2024-01-06,"1,234",I1.1,2.6,0.2\n',
      ),
    ).toEqual([
      "ok",
      'shim "2," is not a number',
      'clearance "-0.2" is not a number',
      'clearance "2e-1" is not a number',
      'odometer "12,5" is not a distance or hours',
      "ok",
    ]);
    // a semicolon file: decimal commas, points as thousands in an odometer, a trailing comma allowed
    const p = readChecksCsv(
      "date;odometer;valve;shim_mm;clearance_mm\n2024-01-01;1.234,5;I1.1;3,;0,2\n2024-01-02;12,5;I1.1;2,60;0,25\n",
      four,
      [],
      { today: TODAY },
    );
    expect(p.rows.map((r) => r.errors)).toEqual([[], []]);
    expect(p.checks.map((c) => [c.odometer, c.readings[0]!.installedStamp, c.readings[0]!.measured])).toEqual([
      [1234.5, 3, 0.2],
      [12.5, 2.6, 0.25],
    ]);
  });

  it("asks for the date order when the file cannot tell, and reads it as chosen", () => {
    const csv = "date,odometer,valve,clearance_mm\n03/04/2024,100,I1.1,0.15\n";
    const dmy = readChecksCsv(csv, four, [], { today: TODAY });
    expect([dmy.dateOrder, dmy.dateOrderOpen, dmy.checks[0]!.date]).toEqual(["dmy", true, "2024-04-03"]);
    const mdy = readChecksCsv(csv, four, [], { today: TODAY, dateOrder: "mdy" });
    expect(mdy.checks[0]!.date).toBe("2024-03-04");
    expect(
      readChecksCsv("date,odometer,valve,clearance_mm\n13/04/2024,1,I1.1,0.1\n04/13/2024,2,I1.1,0.1\n", four, [], {
        today: TODAY,
      }).fileErrors[0],
    ).toMatch(/day first and others the month first/);
  });

  it("refuses a check that is already on the engine, so a file brought in twice adds nothing", () => {
    const csv = "date,odometer,valve,clearance_mm\n2024-04-03,100,I1.1,0.15\n";
    const p = readChecksCsv(csv, four, [{ date: "2024-04-03", odometer: 100 }], { today: TODAY });
    expect(p.ok).toBe(false);
    expect(p.rows[0]!.errors).toEqual(["a check on 2024-04-03 at 100 is already on this engine"]);
  });

  it("saves the checks with their day through the outbox, and the history draws from them", async () => {
    const csv = [
      "date,odometer,valve,shim_mm,clearance_mm,new_shim_mm",
      "2022-04-01,10000,E1.1,2.60,0.26,",
      "2023-04-01,20000,E1.1,2.60,0.21,",
      "2024-04-01,30000,E1.1,2.60,0.17,2.55",
      "2024-04-01,30000,I1.1,2.60,0.15,",
    ].join("\n");
    const p = readChecksCsv(csv, four, [], { today: TODAY });
    expect(p.ok).toBe(true);
    const db = openLocalDb(crypto.randomUUID());
    await db.engines.put(four);
    await importChecks(db, four, p.checks);
    const checks = await db.checks.orderBy("startedAt").toArray();
    expect(checks.map((c) => [c.odometer, c.startedAt, c.status])).toEqual([
      [10000, "2022-04-01T12:00:00.000Z", "closed"],
      [20000, "2023-04-01T12:00:00.000Z", "closed"],
      [30000, "2024-04-01T12:00:00.000Z", "closed"],
    ]);
    const outbox = await db.outbox.toArray();
    expect(outbox.map((o) => o.name)).toEqual([
      "check.put/2",
      "reading.put/1",
      "check.put/2",
      "reading.put/1",
      "check.put/2",
      "reading.put/1",
      "reading.put/1",
    ]);
    expect(outbox[0]!.args).toMatchObject({ status: "closed", odometer: 10000, startedAt: "2022-04-01T12:00:00.000Z" });
    const h = engineHistory(four, checks, await db.readings.toArray());
    const e11 = h.valves.find((v) => v.valveId === "E1.1")!;
    expect(e11.points.map((x) => x.gap)).toEqual([2.86, 2.81, 2.77]);
    expect(e11.currentShim).toBe(2.55);
  });

  it("writes nothing when one check cannot be saved", async () => {
    const db = openLocalDb(crypto.randomUUID());
    await db.engines.put(four);
    const good = {
      date: "2024-01-01",
      odometer: 1,
      notes: null,
      readings: [{ valve: "I1.1", round: 0, measured: 0.15, method: "typed" as const }],
    };
    const bad = {
      date: "2024-01-02",
      odometer: 2,
      notes: null,
      readings: [{ valve: "nonsense", round: 0, measured: 0.15, method: "typed" as const }],
    };
    await expect(importChecks(db, four, [good, bad])).rejects.toThrow(/valve/);
    expect(await db.checks.count()).toBe(0);
    expect(await db.readings.count()).toBe(0);
    expect(await db.outbox.count()).toBe(0);
  });
});
