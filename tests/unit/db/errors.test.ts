import { describe, expect, it } from "vitest";
import { isTransientDbError, isWriteConflict } from "@/db/errors";

/**
 * An error as mysql2 raises it, wrapped as drizzle wraps it: code is the name mysql2 has for the
 * number (none for a MariaDB-only number). Names and numbers from memory of MariaDB's error
 * reference, checked against mysql2's lib/constants/errors.js.
 */
const dbError = (code: string | undefined, errno: number) => {
  const inner = Object.assign(new Error(code ?? String(errno)), { code, errno });
  return Object.assign(new Error("Failed query"), { cause: inner });
};

describe("which database errors are of the moment (503 and Retry-After) and which are not", () => {
  it("a Galera node that is not ready, a commit cut off by a view change and a killed connection are transient", () => {
    expect(isTransientDbError(dbError("ER_UNKNOWN_COM_ERROR", 1047))).toBe(true);
    expect(isTransientDbError(dbError("ER_ERROR_DURING_COMMIT", 1180))).toBe(true);
    expect(isTransientDbError(dbError(undefined, 1927))).toBe(true);
    // a node stopped cleanly (SIGTERM) ends the query it was running; HAProxy sends the next elsewhere
    expect(isTransientDbError(dbError("ER_SERVER_SHUTDOWN", 1053))).toBe(true);
    // a pooled connection closed under the request (mysql2's fatal error without a code)
    const closed = Object.assign(new Error("Can't add new command when connection is in closed state"), {
      fatal: true,
    });
    expect(isTransientDbError(Object.assign(new Error("Failed query"), { cause: closed }))).toBe(true);
    expect(isTransientDbError(dbError("ER_LOCK_WAIT_TIMEOUT", 1205))).toBe(true);
    expect(isTransientDbError(Object.assign(new Error("gone"), { code: "ECONNREFUSED" }))).toBe(true);
  });

  it("a write conflict is transient and is a conflict; a broken query or a duplicate key is neither", () => {
    expect(isWriteConflict(dbError("ER_LOCK_DEADLOCK", 1213))).toBe(true);
    expect(isTransientDbError(dbError("ER_LOCK_DEADLOCK", 1213))).toBe(true);
    expect(isWriteConflict(dbError("ER_UNKNOWN_COM_ERROR", 1047))).toBe(false);
    expect(isTransientDbError(dbError("ER_DUP_ENTRY", 1062))).toBe(false);
    expect(isTransientDbError(dbError("ER_PARSE_ERROR", 1064))).toBe(false);
    expect(isTransientDbError(new Error("plain"))).toBe(false);
  });
});
