import { describe, expect, it } from "vitest";
import { DrizzleQueryError } from "drizzle-orm/errors";
import { serializeError } from "@/server/log";

describe("errors in the log", () => {
  it("keep type, message, stack, database codes and cause, but not a failed query's parameters or SQL", () => {
    const driver = Object.assign(new Error("Lock wait timeout exceeded; try restarting transaction"), {
      code: "ER_LOCK_WAIT_TIMEOUT",
      errno: 1205,
      sqlState: "HY000",
      sql: "update users set password_hash = '$argon2id$secret' where email = 'a@b.example'",
    });
    const e = new DrizzleQueryError(
      "update `users` set `password_hash` = ? where `email` = ?",
      ["$argon2id$secret", "a@b.example"],
      driver,
    );
    const out = serializeError(e);
    const text = JSON.stringify(out);
    expect(text).not.toContain("$argon2id$secret");
    expect(text).not.toContain("a@b.example");
    expect(out).toMatchObject({
      type: "DrizzleQueryError",
      message: "Failed query: update `users` set `password_hash` = ? where `email` = ?\nparams: [not logged]",
    });
    expect(typeof out === "object" && out.stack).toMatch(/^\w*Error: Failed query: .*\nparams: \[not logged\]\n\s+at /);
    expect(typeof out === "object" && out.cause).toMatchObject({
      type: "Error",
      code: "ER_LOCK_WAIT_TIMEOUT",
      errno: 1205,
      sqlState: "HY000",
      message: "Lock wait timeout exceeded; try restarting transaction",
    });
  });

  it("a thrown value that is not an Error is written as text", () => {
    expect(serializeError("plain")).toBe("plain");
    expect(serializeError(42)).toBe("42");
  });
});
