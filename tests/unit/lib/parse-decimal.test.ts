import { describe, expect, it } from "vitest";
import { parseDecimal } from "@/lib/parse-decimal";

describe("parseDecimal, the one reader of typed decimals", () => {
  it("reads a decimal point and a decimal comma as the same number", () => {
    expect(parseDecimal("0.25")).toBe(0.25);
    expect(parseDecimal("0,25")).toBe(0.25);
    expect(parseDecimal("2,65")).toBe(2.65);
    expect(parseDecimal(",5")).toBe(0.5);
    expect(parseDecimal(".5")).toBe(0.5);
    expect(parseDecimal("3,")).toBe(3);
    expect(parseDecimal("12000")).toBe(12000);
    expect(parseDecimal("-1,5")).toBe(-1.5);
  });

  it("ignores spaces around the number, not inside it", () => {
    expect(parseDecimal("  0,25\t")).toBe(0.25);
    expect(parseDecimal("\n7.48 ")).toBe(7.48);
    expect(parseDecimal("0, 25")).toBeNaN();
    expect(parseDecimal("1 000")).toBeNaN();
  });

  it("answers null for nothing typed", () => {
    expect(parseDecimal("")).toBeNull();
    expect(parseDecimal("   ")).toBeNull();
  });

  it("answers NaN for anything that is not one plain decimal", () => {
    for (const s of [
      "1,2,3",
      "1.2.3",
      "1,2.3",
      "-",
      ",",
      ".",
      "--1",
      "+1",
      "1e3",
      "1E-3",
      "0x10",
      "Infinity",
      "NaN",
      "abc",
      "1mm",
      "½",
    ])
      expect(parseDecimal(s), s).toBeNaN();
  });
});
