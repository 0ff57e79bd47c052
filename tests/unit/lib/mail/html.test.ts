import { describe, expect, it } from "vitest";
import { mailHtml } from "@/lib/mail/html";

describe("the HTML part of an e-mail", () => {
  it("makes every web address a real link and keeps the sentence's full stop outside it", () => {
    const html = mailHtml("Confirm", "Confirm this address:\nhttp://127.0.0.1:3000/verify?token=abc_DEF-123\n\nThe link works once. See https://example.test/a.");
    expect(html).toContain('<a href="http://127.0.0.1:3000/verify?token=abc_DEF-123"');
    expect(html).toContain('<a href="https://example.test/a"');
    expect(html).toContain("</a>.");
    expect(html.match(/<p /g)).toHaveLength(2);
  });

  it("escapes what the text carries (a club or engine name with markup stays text)", () => {
    const html = mailHtml("<b>x</b>", 'Teodor commented on "<script>alert(1)</script>" & more');
    expect(html).not.toContain("<script>");
    expect(html).toContain("&lt;script&gt;alert(1)&lt;/script&gt;");
    expect(html).toContain("&quot;");
    expect(html).toContain("&amp; more");
    expect(html).toContain("<title>&lt;b&gt;x&lt;/b&gt;</title>");
  });

  it("escapes an address that carries markup characters inside its link", () => {
    const html = mailHtml("s", "http://h.test/x?a=1&b=2");
    expect(html).toContain('href="http://h.test/x?a=1&amp;b=2"');
  });
});
