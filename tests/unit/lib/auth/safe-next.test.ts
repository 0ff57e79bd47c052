import { describe, expect, it } from "vitest";
import { safeNext } from "@/lib/auth/safe-next";

// Open redirect after sign-in (OWASP ASVS 5.0 V3 Web Frontend Security): shapes browsers read as
// another host, from common practice in redirect filter bypasses.
const ORIGIN = "https://lashwright.example";

describe("safeNext: where sign-in may send the phone", () => {
  it("refuses every value that resolves to another origin", () => {
    for (const raw of ["/\\evil.example/x", "//evil.example/x", "/\\/evil.example", "https://evil.example/", "javascript:alert(1)", "/%5Cevil.example", "\\\\evil.example", "", null, undefined, "engines"]) {
      const out = safeNext(raw, ORIGIN);
      expect(new URL(out, ORIGIN).origin, String(raw)).toBe(ORIGIN);
      expect(out.startsWith("/") && !out.startsWith("//") && !out.startsWith("/\\"), String(raw)).toBe(true);
    }
    expect(safeNext("/\\evil.example/x", ORIGIN)).toBe("/engines");
  });

  it("keeps a path on our own origin with its query string and fragment", () => {
    expect(safeNext("/check?id=3f1c2d4e-0000-4000-8000-000000000001", ORIGIN)).toBe("/check?id=3f1c2d4e-0000-4000-8000-000000000001");
    expect(safeNext("/invite?token=abc_DEF-123#top", ORIGIN)).toBe("/invite?token=abc_DEF-123#top");
  });
});
