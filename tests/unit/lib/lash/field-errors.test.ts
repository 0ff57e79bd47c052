import { describe, expect, it } from "vitest";
import { z } from "zod";
import { fieldErrors, issuePath, LashInputError, parseOrThrow } from "@/lib/lash";

const form = z.object({
  name: z.string().min(1, "give it a name"),
  intake: z.object({ min: z.number("a number"), max: z.number("a number") }),
  firingOrder: z.array(z.number().int("whole numbers")),
});

describe("fieldErrors, the one way problems become { field: message }", () => {
  it("joins a zod path with dots and keeps each field's first problem", () => {
    const r = form.safeParse({ name: "", intake: { min: "x" }, firingOrder: [1, 2.5] });
    expect(r.success).toBe(false);
    expect(fieldErrors(r.error!.issues)).toEqual({
      name: "give it a name",
      "intake.min": "a number",
      "intake.max": "a number",
      "firingOrder.1": "whole numbers",
    });
    const twice = [
      { path: ["size"], message: "first" },
      { path: ["size"], message: "second" },
    ];
    expect(fieldErrors(twice)).toEqual({ size: "first" });
  });

  it("puts a problem with the whole input under _", () => {
    const r = z.object({ a: z.number() }).safeParse("not an object");
    expect(fieldErrors(r.error!.issues)).toEqual({ _: expect.any(String) });
    expect(fieldErrors([{ path: "", message: "bad" }])).toEqual({ _: "bad" });
  });

  it("reads the issues of a LashInputError, whose paths are already joined", () => {
    const e = (() => {
      try {
        parseOrThrow(form, { name: "x", intake: { min: 1, max: "y" }, firingOrder: [] }, "engine");
      } catch (err) {
        return err as LashInputError;
      }
    })()!;
    expect(e).toBeInstanceOf(LashInputError);
    expect(fieldErrors(e.issues)).toEqual({ "intake.max": "a number" });
  });

  it("folds paths onto the field a screen shows", () => {
    const issues = [
      { path: ["firingOrder", 0], message: "whole numbers" },
      { path: ["firingOrder", 3], message: "too high" },
      { path: ["name"], message: "give it a name" },
    ];
    const fold = (p: string) => (p.startsWith("firingOrder") ? "firingOrder" : p);
    expect(fieldErrors(issues, fold)).toEqual({ firingOrder: "whole numbers", name: "give it a name" });
  });

  it("keeps a field named __proto__ or constructor as a plain key", () => {
    const out = fieldErrors([
      { path: ["__proto__"], message: "no" },
      { path: ["constructor"], message: "nor this" },
    ]);
    expect(Object.keys(out)).toEqual(["__proto__", "constructor"]);
    expect(Object.getPrototypeOf(out)).toBe(Object.prototype);
    expect(issuePath({ path: ["readings", 0, "valve"] })).toBe("readings.0.valve");
  });
});
