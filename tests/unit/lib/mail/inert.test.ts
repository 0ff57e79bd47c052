import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { inert } from "@/lib/mail/inert";
import { digest, digestSubject, merge } from "@/lib/mail/digest";

// what mail clients make links of: a scheme, "www.", or a host name with a dot and a top-level domain
const LINKABLE = /[a-z][a-z0-9+.-]*:\/\/|www\.[a-z0-9]|[a-z0-9-]+\.[a-z]{2,}/i;

describe("text someone chose, in a mail to someone who has not joined", () => {
  it("cannot be read as an address: dots and schemes are broken, and it is quoted on one line", () => {
    expect(inert("Free shims at https://evil.example/login")).toBe("“Free shims at https[:]//evil[.]example/login”");
    expect(inert("www.evil.example")).toBe("“www[.]evil[.]example”");
    expect(inert("Mr. Smith's club")).toBe("“Mr. Smith's club”");
    // look-alike dots that IDNA reads as dots
    expect(inert("evil\uFF0Eexample evil\u3002example")).toBe("“evil[.]example evil[.]example”");
    expect(inert("two\nlines\r\n\u202Eand more")).toBe("“two lines and more”");
    expect(inert("x".repeat(200)).length).toBeLessThanOrEqual(82);
  });

  it("whatever the text, what comes out has nothing a mail client would link", () => {
    const hosty = fc.constantFrom(
      "http://",
      "https://",
      "www.",
      ".",
      "\uFF0E",
      "\u3002",
      "evil",
      "example",
      "com",
      "/",
      ":",
      " ",
      "@",
      "x",
    );
    fc.assert(
      fc.property(fc.array(fc.oneof(hosty, fc.string()), { maxLength: 30 }), (parts) => {
        const out = inert(parts.join(""), 500)
          .normalize("NFKC")
          .replace(/[\u3002\uFF61]/g, ".");
        expect(out).not.toMatch(LINKABLE);
      }),
      { numRuns: 2000 },
    );
  });
});

describe("notices gathered into one mail", () => {
  it("one notice is sent as it is; several name each subject while they fit and count the rest", () => {
    expect(digest([{ subject: "A", body: "a" }], "http://x/")).toEqual({ subject: "A", body: "a" });
    const d = digest(
      [
        { subject: "New comment from Teodor", body: "one" },
        { subject: "Review verdict: measure again", body: "two" },
      ],
      "http://x/",
    );
    expect(d.subject).toBe("New comment from Teodor; Review verdict: measure again");
    expect(d.body).toContain("one");
    expect(d.body).toContain("two");
    const many = digestSubject(Array.from({ length: 40 }, (_, i) => `Notice number ${i}`));
    expect(many.length).toBeLessThanOrEqual(160);
    expect(many).toMatch(/and \d+ more$/);
  });

  it("twenty notices of one kind become one, showing at most 25 texts", () => {
    const m = merge(
      Array.from({ length: 30 }, (_, i) => ({ subject: "Pat asks to borrow 1 × 2.45 mm", body: `ask ${i}` })),
    );
    expect(m.subject).toBe("Pat asks to borrow 1 × 2.45 mm");
    expect(m.body).toContain("ask 24");
    expect(m.body).not.toContain("ask 25");
    expect(m.body).toContain("5 more");
  });
});
