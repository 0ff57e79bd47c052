import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { formatLength, inchesToMm, lengthNumber, shimNumber } from "@/lib/lash";
import { checkCsv } from "@/lib/check/csv";
import { readChecksCsv } from "@/lib/check/csv-import";
import { checkPlan, valveViews } from "@/lib/check/derive";
import { foundWords, shimWords, valveRounds } from "@/lib/check/rounds";
import { loanWords, MOVE_WORDS, STATE_WORDS } from "@/lib/pool/rules";
import { localEngine, localReading, oneValveEach } from "../../support/check-fixture";

/**
 * Every value shown as precisely as it was entered or measured: a typed 0.075 mm as 0.075 (the plan
 * used 0.075: the screen must not say 0.08), a blade as its label, a micrometer to 0.001 mm. The
 * engine is invented test data (a twin, intake 0.10-0.20, exhaust 0.20-0.30, a 0.05 mm series).
 */
const twin = localEngine({
  id: "0b6f5c2e-5555-4a4a-9a9a-000000000001",
  ...oneValveEach("Test twin", [1, 2]),
  assembledShim: null,
  shimPosition: "over",
});
const r = localReading;

describe("lengths as they were given", () => {
  it("a typed 0.075 mm stays 0.075; blades keep their two places; a micrometer reading its three", () => {
    expect(formatLength(0.075, "mm")).toBe("0.075 mm");
    expect(formatLength(0.08, "mm")).toBe("0.08 mm");
    expect(formatLength(0.1, "mm")).toBe("0.10 mm");
    expect(shimNumber(2.441, true)).toBe("2.441");
    expect(shimNumber(2.44, true)).toBe("2.440");
    expect(shimNumber(2.6)).toBe("2.60");
    expect(shimNumber(2.525)).toBe("2.525");
  });

  it("inches: a blade of 0.0015 in is 0.0015, an odd typed 0.00125 in keeps its fifth place, a band in mm rounds to 0.0001 in", () => {
    expect(formatLength(inchesToMm(0.0015), "in")).toBe("0.0015 in");
    expect(formatLength(inchesToMm(0.00125), "in")).toBe("0.00125 in");
    expect(formatLength(0.1, "in")).toBe("0.0039 in");
    expect(lengthNumber(0.2794, "in")).toBe("0.0110");
  });

  it("a reading in words: the typed value as typed, the blades as labelled, the shim as stamped and measured", () => {
    expect(foundWords({ measured: 0.075, method: "typed", feelerGo: null, feelerNoGo: null }, "mm")).toBe(
      "0.075 mm typed",
    );
    expect(foundWords({ measured: 0.08, method: "feeler", feelerGo: 0.08, feelerNoGo: 0.09 }, "mm")).toBe(
      "0.08 mm goes, 0.09 mm does not",
    );
    expect(shimWords({ installedStamp: 2.525, installedMicrometer: 2.52 })).toBe("2.525 stamp, 2.520 micrometer");
    expect(valveRounds([r("I1.1", { measured: 0.075, method: "typed" })], "I1.1", "mm")[0]!.text).toBe(
      "2.60 stamp · 0.075 mm typed",
    );
  });

  it("the CSV writes the typed 0.075 whole", () => {
    const views = valveViews(
      twin,
      [
        r("I1.1", { measured: 0.075, method: "typed" }),
        r("E1.1", { feelerGo: 0.25, feelerNoGo: 0.28, measured: 0.25 }),
      ],
      () => null,
    );
    const rows = Papa.parse<Record<string, string>>(
      checkCsv(
        { engine: "Test twin", odometer: 1, odometerUnit: "km", date: "2026-05-30" },
        views,
        checkPlan(twin, views, []),
      ).trim(),
      { header: true },
    ).data;
    expect(rows.find((x) => x.valve === "I1.1")!.clearance_mm).toBe("0.075");
  });
});

describe("words a reader can trust", () => {
  it("the import's note names the file's columns that have no unit, and its example has one", () => {
    const p = readChecksCsv("date,odometer,valve,shim,clearance\n2024-01-01,1000,I1.1,2.60,0.15\n", twin, [], {
      today: "2026-12-02",
    });
    const note = p.warnings.find((w) => /no unit/.test(w))!;
    expect(note).toContain('"shim", "clearance" have no unit');
    expect(note).toMatch(/like "clearance_mm" or "clearance_in"/);
    expect(
      readChecksCsv("date,odometer,valve,shim_mm,clearance_mm\n2024-01-01,1000,I1.1,2.60,0.15\n", twin, [], {
        today: "2026-12-02",
      }).warnings.some((w) => /no unit/.test(w)),
    ).toBe(false);
  });

  it("a loan's state is read from each side: the lender is asked, the borrower waits", () => {
    expect(loanWords("asked", "borrower")).toBe(STATE_WORDS.asked);
    expect(loanWords("asked", "lender")).not.toMatch(/waiting for the lender/);
    expect(loanWords("asked", "lender")).toMatch(/asks you/);
    for (const w of [
      ...Object.values(MOVE_WORDS),
      ...(["lender", "borrower"] as const).flatMap((s) =>
        (Object.keys(STATE_WORDS) as (keyof typeof STATE_WORDS)[]).map((k) => loanWords(k, s)),
      ),
    ])
      expect(w).not.toMatch(/-back|hand-over/);
  });
});
