import { describe, expect, it } from "vitest";
import { mailHtml } from "@/lib/mail/html";

const own = { linkOrigin: "http://127.0.0.1:3000" };

describe("the HTML part of an e-mail", () => {
  it("makes the app's own addresses real links and keeps the sentence's full stop outside them", () => {
    const html = mailHtml(
      "Confirm",
      "Confirm this address:\nhttp://127.0.0.1:3000/verify?token=abc_DEF-123\n\nThe link works once. See http://127.0.0.1:3000/a.",
      own,
    );
    expect(html).toContain('<a href="http://127.0.0.1:3000/verify?token=abc_DEF-123"');
    expect(html).toContain('<a href="http://127.0.0.1:3000/a"');
    expect(html).toContain("</a>.");
    expect(html.match(/<p /g)).toHaveLength(2);
  });

  it("never makes an address elsewhere a link: text someone typed stays text", () => {
    const html = mailHtml(
      "Invite",
      "Join https://evil.example/login or http://127.0.0.1:3001/x, then http://127.0.0.1:3000/invite?token=t",
      own,
    );
    expect(html.match(/<a /g)).toHaveLength(1);
    expect(html).toContain('<a href="http://127.0.0.1:3000/invite?token=t"');
    expect(html).toContain("Join https://evil.example/login or");
  });

  it("escapes what the text carries (a club or engine name with markup stays text)", () => {
    const html = mailHtml("<b>x</b>", 'Teodor commented on "<script>alert(1)</script>" & more', own);
    expect(html).not.toContain("<script>");
    expect(html).toContain("&lt;script&gt;alert(1)&lt;/script&gt;");
    expect(html).toContain("&quot;");
    expect(html).toContain("&amp; more");
    expect(html).toContain("<title>&lt;b&gt;x&lt;/b&gt;</title>");
  });

  it("escapes an address that carries markup characters inside its link", () => {
    const html = mailHtml("s", "http://127.0.0.1:3000/x?a=1&b=2", own);
    expect(html).toContain('href="http://127.0.0.1:3000/x?a=1&amp;b=2"');
  });
});
