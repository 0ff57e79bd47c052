import { describe, expect, it } from "vitest";
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { engines, memberships, users } from "@/db/schema";
import { LENGTH_UNITS, ODOMETER_UNITS } from "@/lib/lash";
import { ROLES } from "@/lib/roles";
import { engineInput, roleSchema } from "@/lib/schemas/records";

// Units, odometer units and roles are each listed once (lib/lash/units.ts, lib/roles.ts); the
// database's enums, the zod schemas and the screens' choices derive from those lists.
const ROOTS = ["app", "components", "db", "lib", "server"];
const HOMES = new Set(["lib/lash/units.ts", "lib/roles.ts"]);
// a union or an array spelt out again: "mm" | "in", ["km", "mi", "h"], ("mechanic" | "mentor" ...
const COPIES = [
  /"mm"\s*[|,]\s*"in"|"in"\s*[|,]\s*"mm"/,
  /"km"\s*[|,]\s*"mi"/,
  /"mechanic"\s*[|,]\s*"mentor"|"mentor"\s*[|,]\s*"admin"/,
];

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = join(dir, e.name);
    if (e.isDirectory()) return e.name === "migrations" || e.name === "node_modules" ? [] : sources(p);
    return /\.tsx?$/.test(e.name) ? [p] : [];
  });
}

describe("one list each for length units, odometer units and roles", () => {
  it("is spelt out in its home module only", () => {
    const copies = ROOTS.flatMap(sources)
      .filter((f) => !HOMES.has(f))
      .flatMap((f) =>
        readFileSync(f, "utf8")
          .split("\n")
          .flatMap((line, i) => (COPIES.some((re) => re.test(line)) ? [`${f}:${i + 1}: ${line.trim()}`] : [])),
      );
    expect(copies).toEqual([]);
  });

  it("is what the database's enums and the schemas accept", () => {
    expect(users.displayUnit.enumValues).toEqual([...LENGTH_UNITS]);
    expect(engines.displayUnit.enumValues).toEqual([...LENGTH_UNITS]);
    expect(engines.odometerUnit.enumValues).toEqual([...ODOMETER_UNITS]);
    expect(memberships.role.enumValues).toEqual([...ROLES]);
    expect(roleSchema.options).toEqual([...ROLES]);
    expect(engineInput.shape.odometerUnit.unwrap().options).toEqual([...ODOMETER_UNITS]);
  });
});
