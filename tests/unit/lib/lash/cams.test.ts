import { describe, expect, it } from "vitest";
import { camsOut, camsOutWords, ENGINE_PRESETS, LashInputError } from "@/lib/lash";
import { OVER_BUCKET_CAUTIONS, OVER_BUCKET_METHOD, prepareCautions, UNDER_BUCKET_FIT } from "@/lib/check/shim-position";

/**
 * Which camshafts come out for a fit. The rule (docs/trade.md, "Where the shim sits": common practice;
 * from memory): with the shims under the buckets, a shim is reached only with the camshaft over its
 * valve out, the intake cam for an intake valve and the exhaust cam for an exhaust valve; with the
 * shims over the buckets every cam stays in.
 */
describe("the cams that come out", () => {
  it("only intakes change: the intake cam, over the cylinders whose valves change", () => {
    expect(camsOut({ shimPosition: "under", valves: ["I3.2", "I1.1", "I3.1"] })).toEqual([
      { cam: "intake", cylinders: [1, 3] },
    ]);
  });

  it("only exhausts change: the exhaust cam alone", () => {
    expect(camsOut({ shimPosition: "under", valves: ["E2.1", "E4.2"] })).toEqual([
      { cam: "exhaust", cylinders: [2, 4] },
    ]);
  });

  it("both change: both cams, intake first", () => {
    expect(camsOut({ shimPosition: "under", valves: ["E2.1", "I1.2", "E1.1"] })).toEqual([
      { cam: "intake", cylinders: [1] },
      { cam: "exhaust", cylinders: [1, 2] },
    ]);
  });

  it("none change: no cam comes out", () => {
    expect(camsOut({ shimPosition: "under", valves: [] })).toEqual([]);
    expect(camsOutWords([])).toBe("Cams out: none (no shim changes).");
  });

  it("shims over the buckets: every cam stays in, whatever changes", () => {
    expect(camsOut({ shimPosition: "over", valves: ["I1.1", "E1.1"] })).toEqual([]);
  });

  it("says it as the plan's line", () => {
    expect(camsOutWords(camsOut({ shimPosition: "under", valves: ["I1.1", "I3.1", "E2.2"] }))).toBe(
      "Cams out: intake (cylinders 1, 3), exhaust (cylinder 2).",
    );
  });

  it("refuses what is not a valve or not a position, naming the field", () => {
    expect(() => camsOut({ shimPosition: "under", valves: ["X1.1"] })).toThrow(LashInputError);
    expect(() => camsOut({ shimPosition: "under", valves: ["X1.1"] })).toThrow(/valves\.0/);
    expect(() => camsOut({ shimPosition: "sideways" as never, valves: [] })).toThrow(/over" or "under/);
  });
});

describe("what the screens ask, by where the shims sit", () => {
  it("the usual position for each layout preset (common practice; from memory)", () => {
    const by = Object.fromEntries(ENGINE_PRESETS.map((p) => [p.key, p.shimPosition]));
    // the older two-valve inline four: over the bucket; four-valve layouts and small shims: under
    expect(by).toMatchObject({ "i4-8": "over", "i4-16": "under", "single-4": "under", "i6-24": "under" });
    for (const p of ENGINE_PRESETS) expect(["over", "under"]).toContain(p.shimPosition);
  });

  it("Prepare names the bucket tool only over the bucket, the cam-cap order and marks only under it", () => {
    // docs/trade.md "Cautions to show" (common practice) and README "Safety"
    const over = prepareCautions("over");
    const under = prepareCautions("under");
    const unsaid = prepareCautions(null);
    expect(over.some((c) => /bucket tool/.test(c))).toBe(true);
    expect(under.some((c) => /bucket tool/.test(c))).toBe(false);
    expect(under.some((c) => /cam-cap order and torque figures/.test(c))).toBe(true);
    expect(under.some((c) => /mark the cam chain/.test(c))).toBe(true);
    expect(over.some((c) => /cam-cap/.test(c))).toBe(false);
    for (const list of [over, under, unsaid]) {
      expect(list[0]).toMatch(/Engine cold/);
      expect(list.at(-1)).toMatch(/service manual has the last word/);
    }
  });

  it("the under-bucket fit runs in the trade's order, each task with its cautions (common practice; from memory)", () => {
    expect(UNDER_BUCKET_FIT.map((t) => t.key)).toEqual([
      "timing",
      "mark",
      "cams-out",
      "swap",
      "cams-in",
      "torque",
      "turn",
    ]);
    const text = (k: string) => UNDER_BUCKET_FIT.find((t) => t.key === k)!;
    expect(text("timing").task).toMatch(/timing position the manual gives/);
    expect(text("cams-out").task).toMatch(/loosen the cam caps evenly.*manual's order/);
    expect(text("cams-in").task).toMatch(/marks aligned/);
    expect(text("torque").task).toMatch(/torque them evenly to the manual's figure/);
    expect(text("turn").task).toMatch(/two full turns by hand and check the marks/);
    for (const t of UNDER_BUCKET_FIT) expect(t.cautions.length).toBeGreaterThan(0);
    const all = UNDER_BUCKET_FIT.flatMap((t) => t.cautions);
    expect(all).toContain("The manual's figures and order govern.");
    expect(all).toContain("Never turn the engine with a cam cap loose.");
    expect(all).toContain("A valve can hit a piston if the timing is wrong.");
    // a cap is loose from taking the cams out until the caps are torqued
    for (const k of ["cams-out", "swap", "torque"])
      expect(text(k).cautions).toContain("Never turn the engine with a cam cap loose.");
  });

  it("over the bucket: the tool, the notch, the number face down, a magnet (common practice)", () => {
    const m = OVER_BUCKET_METHOD.join(" | ");
    expect(m).toMatch(/bucket tool/);
    expect(m).toMatch(/notch sits where the shim can be lifted/);
    expect(m).toMatch(/number face down/);
    expect(m).toMatch(/magnet/);
    expect(OVER_BUCKET_CAUTIONS.join(" ")).toMatch(/Never stack/);
  });
});
