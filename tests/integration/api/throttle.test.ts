import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { makeUser } from "../../support/fixtures";
import { appPerFile } from "../../support/per-file";

const app = appPerFile();

describe("sign-in throttling", () => {
  it("refuses the 6th attempt within the window, even with the right password, also after a restart", async () => {
    const u = await makeUser("throttle");
    const c = new Client(app.url);
    for (let i = 0; i < 5; i++)
      expect(await c.signIn("password", { email: u.email, password: `wrong-${i}-password` })).toBe("CredentialsSignin");
    expect(await c.signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    await app.restart();
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    // another account from the same network address is not locked out by these five
    const other = await makeUser("throttle-other");
    expect(
      await new Client(app.url, c.from).signIn("password", { email: other.email, password: other.password }),
    ).toBeNull();
  });
});
