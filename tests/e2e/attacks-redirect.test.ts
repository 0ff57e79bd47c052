import { describe, expect, it } from "vitest";
import { baseUrl, DEMO_PASSWORD, phoneContext } from "../support/browser";
import { browserPerFile } from "../support/per-file";

/**
 * Open redirect after a real sign-in (issue 24, item 1; OWASP ASVS 5.0 V3 Web Frontend Security):
 * dot segments that the first reading of the URL collapses to "//evil.example/x", which the router's
 * second reading takes as another host. Any request to evil.example is answered here by a page that
 * says so, so the test never depends on a name server and sees exactly where the phone went.
 */
const SHAPES = ["/.//evil.example/x", "/..//evil.example/x", "/%2e//evil.example/x", "/.\\\\evil.example/x"];

const browser = browserPerFile();

describe("open redirect through dot segments", () => {
  for (const next of SHAPES) {
    it(`sign-in with next=${next} lands on the app's own origin`, async () => {
      const ctx = await phoneContext(browser);
      const evil: string[] = [];
      // by host: the sign-in page's own address names evil.example in its query string
      await ctx.route(
        (u) => u.hostname.endsWith("evil.example"),
        (r) => {
          evil.push(r.request().url());
          return r.fulfill({ status: 200, contentType: "text/html", body: "<h1>evil.example</h1>" });
        },
      );
      const page = await ctx.newPage();
      await page.goto(`${baseUrl()}/sign-in?next=${encodeURIComponent(next)}`);
      await page.getByLabel("E-mail").fill("mara@kestrel-hollow.example");
      await page.getByLabel("Password").fill(DEMO_PASSWORD);
      await page.getByRole("button", { name: "Sign in", exact: true }).tap();
      // wherever the sign-in sends the phone: away from the sign-in page
      await page.waitForURL((u) => u.pathname !== "/sign-in" || u.hostname.endsWith("evil.example"));
      expect(new URL(page.url()).origin).toBe(new URL(baseUrl()).origin);
      await page.getByText("Blue four (inline four, 16 valves)").waitFor();
      expect(evil).toEqual([]);
      await ctx.close();
    });
  }
});
