import { describe, expect, it } from "vitest";
import { pendingKey, PENDING_KEY } from "@/lib/sync/pending";
import { mutationNames, parseMutation } from "@/lib/sync/mutations";
import { IDS, SHIPPED } from "@/tests/fixtures/shipped-outbox";

describe("the key a queued change holds against a pull", () => {
  it("has an entry for every mutation name (the type makes this a compile error too)", () => {
    expect(Object.keys(PENDING_KEY).sort()).toEqual([...mutationNames].sort());
  });

  it("names the record each shipped outbox entry changes, as the pull looks it up", () => {
    const key = (name: string) => {
      const m = SHIPPED.find((x) => x.name === name)!;
      const parsed = parseMutation(m.name, m.args);
      if (!parsed.ok) throw new Error(parsed.reason);
      return pendingKey(m.name, parsed.args);
    };
    expect(key("engine.put/1")).toBe(`engine:${IDS.engine}`);
    expect(key("engine.put/2")).toBe(`engine:${IDS.engine}`);
    expect(key("engine.put/3")).toBe(`engine:${IDS.engine}`);
    expect(key("check.put/2")).toBe(`check:${IDS.checkImported}`);
    expect(key("check.delete/1")).toBe(`check:${IDS.checkOld}`);
    // round 0 when the reading does not say, as the server stores it
    expect(key("reading.put/1")).toBe(`reading:${IDS.check}:I1.1:0`);
    expect(key("tray.put/1")).toBe(`tray:${IDS.trayGone}`);
    // a comment or a loan never holds back a pulled engine, check, reading or tray row
    expect(key("comment.add/1")).toBeNull();
    expect(key("borrow.move/1")).toBeNull();
  });

  it("holds nothing for a name this build does not know (an outbox from a newer app after a downgrade)", () => {
    expect(pendingKey("engine.put/9", { id: IDS.engine })).toBeNull();
    expect(pendingKey("constructor", {})).toBeNull();
  });
});
