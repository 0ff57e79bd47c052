import { describe, expect, it } from "vitest";
import { baseUrl } from "../support/browser";

// What a phone's first paint waits for on the pages a newcomer or a mentor opens from a link: read
// from the HTML the server sends, so it is a count, not a timing (npm run bench:lighthouse has the
// scores). A second font preloaded competes with the page's own first bytes on a slow line.
const PAGES = ["/", "/sign-in", `/review?id=${crypto.randomUUID()}`, `/check?id=${crypto.randomUUID()}`];

const tag = (html: string, re: RegExp) => html.match(re)?.[0] ?? "";

describe("the first paint needs only the page's HTML", () => {
  it.each(PAGES)("%s: only the body's face is preloaded", async (path) => {
    const res = await fetch(`${baseUrl()}${path}`);
    expect(res.status).toBe(200);
    const html = await res.text();
    // a prerendered page lists its preloads in the head, a page rendered per request in a Link header
    const inHead = html.match(/<link[^>]*rel="preload"[^>]*as="font"[^>]*>/g) ?? [];
    const inHeader = (res.headers.get("link") ?? "")
      .split(",")
      .filter((l) => /rel=preload/.test(l) && /as="?font/.test(l));
    expect([...inHead, ...inHeader]).toHaveLength(1);
  });

  it("the sign-in form is in the server's HTML, with a link's address filled in and its submit waiting for the scripts", async () => {
    const html = await (await fetch(`${baseUrl()}/sign-in?email=mara%40garage.example&next=%2Fclub`)).text();
    expect(tag(html, /<input[^>]*id="email"[^>]*>/)).toContain('value="mara@garage.example"');
    expect(tag(html, /<input[^>]*id="password"[^>]*>/)).not.toBe("");
    // sent by the browser alone, the form would put the password in the address
    expect(tag(html, /<button[^>]*type="submit"[^>]*>/)).toMatch(/disabled/);
  });
});
