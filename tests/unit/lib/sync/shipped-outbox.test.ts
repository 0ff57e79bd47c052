import { describe, expect, it } from "vitest";
import { MUTATION_NAME_FORM, mutationNames, parseMutation } from "@/lib/sync/mutations";
import { SHIPPED, withIds } from "../../../fixtures/shipped-outbox";

/**
 * The outbox an older app wrote must stay acceptable (DEVELOPERS.md "Schema changes"):
 * every name the phone can queue has a fixture of what it queues, and every fixture still parses.
 * Removing a name, or tightening a schema so an old shape no longer parses, fails here; the
 * integration test tests/integration/api/shipped-outbox.test.ts applies them all on MariaDB.
 */
const ids = { club: "c1ab0000-0000-4000-8000-000000000001", share: "5ba7e000-0000-4000-8000-000000000001" };

describe("every mutation name and shape ever shipped", () => {
  it("each name the phone can queue has a fixture of an outbox entry", () => {
    const covered = new Set(SHIPPED.map((m) => m.name));
    expect(mutationNames.filter((n) => !covered.has(n))).toEqual([]);
  });

  it.each(SHIPPED.map((m) => [`${m.name} (${m.shape})`, m] as const))("%s is still accepted", (_, m) => {
    const r = parseMutation(m.name, withIds(m.args, ids));
    expect(r.ok ? "accepted" : r.reason).toBe("accepted");
  });

  it("a newer phone's well-formed name waits for a newer server; a name no version could send is refused for good", () => {
    for (const n of mutationNames) expect(MUTATION_NAME_FORM.test(n), n).toBe(true);
    expect(parseMutation("engine.put/9", {})).toMatchObject({ ok: false, unknown: true });
    for (const n of [
      "constructor",
      "__proto__",
      "prototype",
      "toString",
      "engine.put",
      "Engine.put/1",
      "engine.put/1 ",
    ])
      expect(parseMutation(n, {}), n).not.toHaveProperty("unknown");
  });

  it("fixtures are kept, not rewritten: each shape is named once", () => {
    const keys = SHIPPED.map((m) => `${m.name} ${m.shape}`);
    expect(new Set(keys).size).toBe(keys.length);
  });
});
