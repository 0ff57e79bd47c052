import "fake-indexeddb/auto";
import fc from "fast-check";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { checkCsv, defuseFormula } from "@/lib/check/csv";
import { valveViews } from "@/lib/check/derive";
import { feelerReading, localEngine } from "../../support/check-fixture";

// An invented four (test data, not trade data), as in csv.test.ts.
const four = localEngine({ shimPosition: "over" });
const reading = feelerReading("I1.1", 2.6, 0.15);
const views = valveViews(four, [reading], () => 2.6);
const engineCell = (engine: string) => {
  const csv = checkCsv({ engine, odometer: 1, odometerUnit: "km", date: "2026-05-30" }, views, null);
  return Papa.parse<Record<string, string>>(csv.trim(), { header: true }).data[0]!.engine!;
};

// OWASP "CSV Injection": a cell starting with =, +, -, @, tab or carriage return is read as a formula.
const STARTS = ["=", "+", "-", "@", "\t", "\r"];

describe("CSV formula guard", () => {
  it("defuses a formula followed by a line break (a whole-cell match let it through)", () => {
    const name = '=HYPERLINK("http://evil.example/x","Open")\nTest four';
    expect(engineCell(name)).toBe(`'${name}`);
    expect(engineCell("=1+1\r\n")).toBe("'=1+1\r\n");
  });

  it("guards every dangerous first character, whatever follows, and nothing else", () => {
    for (const c of STARTS) expect(engineCell(`${c}cmd|' /C calc'!A0\n`)).toMatch(/^'/);
    expect(engineCell("Test four")).toBe("Test four");
    expect(engineCell("Mara's 4 = fast")).toBe("Mara's 4 = fast");
  });

  it("holds for any text: a dangerous first character always gets the apostrophe, a safe one never", () => {
    fc.assert(
      fc.property(fc.constantFrom(...STARTS, "a", "1", " ", "'", "é"), fc.string(), (first, rest) => {
        const cell = engineCell(first + rest);
        if (STARTS.includes(first)) expect(cell).toBe(`'${first}${rest}`);
        else expect(cell).toBe(first + rest);
      }),
    );
    expect(defuseFormula("-0.05")).toBe("'-0.05");
  });

  it("leaves numbers as numbers", () => {
    const csv = checkCsv({ engine: "x", odometer: 1, odometerUnit: "km", date: "2026-05-30" }, views, null);
    const row = Papa.parse<Record<string, string>>(csv.trim(), { header: true }).data[0]!;
    expect(row).toMatchObject({ odometer: "1", shim_mm: "2.60", clearance_mm: "0.15" });
  });
});
