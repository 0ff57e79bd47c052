import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { makeUser } from "../../support/fixtures";
import { linkToken, waitForMail, inbox } from "../../support/mail";
import { appPerFile } from "../../support/per-file";

/**
 * The owner locked out (issue 24, item 2): a stranger's five wrong passwords and five reset requests
 * in 15 minutes must not keep the owner out. OWASP "Slow Down Online Guessing Attacks with Device
 * Cookies": a browser that signed in to the account before is counted on its own budget; NIST SP
 * 800-63B 5.2.2: rate limiting must not let an attacker deny the subscriber; OWASP ASVS 5.0 V6
 * Authentication. A link already in the owner's inbox keeps working.
 */
const app = appPerFile();

const DEVICE_COOKIE = "lashwright-device";

/** The stranger: five wrong passwords and five reset requests, from browsers the account never saw. */
async function spendTheAccount(email: string) {
  for (let i = 0; i < 5; i++)
    expect(await new Client(app.url).signIn("password", { email, password: `stranger-guess-${i}` })).toBe(
      "CredentialsSignin",
    );
  // five requests, or fewer if the owner's own asking already used part of the address's five
  for (let i = 0; i < 5; i++)
    expect([202, 429]).toContain((await new Client(app.url).post("/api/account/password-reset", { email })).status);
  expect((await new Client(app.url).post("/api/account/password-reset", { email })).status).toBe(429);
}

describe("the owner is not locked out by a stranger (OWASP device cookies; NIST SP 800-63B 5.2.2; ASVS V6 Authentication)", () => {
  it("after a stranger spends the account's budgets, the owner's browser signs in and gets a link, and a link mailed earlier still works", async () => {
    const u = await makeUser("lockout");
    // the owner has signed in on this browser before, and later signed out
    const browser = new Client(app.url);
    expect(await browser.signIn("password", { email: u.email, password: u.password })).toBeNull();
    await browser.signOut();
    expect((await browser.get("/api/account")).status).toBe(401);
    // a sign-in link the owner asked for on another phone, still unread in the inbox
    expect((await new Client(app.url).post("/api/account/sign-in-link", { email: u.email })).status).toBe(202);
    const earlier = linkToken(await waitForMail(u.email, /sign-in link/), "/sign-in/link");

    await spendTheAccount(u.email);
    // the account-wide budgets are spent: an unknown browser is held back, even with the right password
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    const refused = await new Client(app.url).post("/api/account/sign-in-link", { email: u.email });
    expect(refused.status).toBe(429);
    expect(
      Number(
        (
          await new Client(app.url).raw("POST", "/api/account/password-reset", {
            body: JSON.stringify({ email: u.email }),
            headers: { "content-type": "application/json" },
          })
        ).headers.get("retry-after"),
      ),
    ).toBeGreaterThan(0);

    // the owner's own browser is not
    expect(await browser.signIn("password", { email: u.email, password: u.password })).toBeNull();
    expect((await browser.get("/api/account")).json.user.email).toBe(u.email);
    const mails = (await inbox(u.email)).length;
    expect((await browser.post("/api/account/sign-in-link", { email: u.email })).status).toBe(202);
    await expect.poll(async () => (await inbox(u.email)).length, { timeout: 15_000 }).toBe(mails + 1);

    // and the link mailed before the attack opens the account on the other phone
    const phone = new Client(app.url);
    expect(await phone.signIn("email-link", { token: earlier })).toBeNull();
    expect((await phone.get("/api/account")).json.user.email).toBe(u.email);
  });

  it("the device cookie is httpOnly and SameSite=Lax, vouches only for its own account, and cannot be forged", async () => {
    const victim = await makeUser("lockout-victim");
    const attacker = await makeUser("lockout-attacker");
    const c = new Client(app.url);
    const res = await c.signInAnswer("password", { email: attacker.email, password: attacker.password });
    const set = res.headers.getSetCookie().find((h) => h.startsWith(`${DEVICE_COOKIE}=`));
    expect(set).toBeDefined();
    expect(set).toMatch(/HttpOnly/i);
    expect(set).toMatch(/SameSite=Lax/i);
    expect(set).not.toMatch(/; Secure/i); // plain http here; Secure (and the __Host- name) when NEXTAUTH_URL is https

    await spendTheAccount(victim.email);
    // the attacker's genuine device cookie is for the attacker's account only
    expect(await c.signIn("password", { email: victim.email, password: victim.password })).toBe("Throttled");
    // nor does a cookie rewritten to name the victim, or one made up, count as the victim's device
    const value = c.cookieHeader().match(new RegExp(`${DEVICE_COOKIE}=([^;]+)`))![1]!;
    const [, issued, nonce, mac] = value.split("~")[0]!.split(".");
    const forged = `${Buffer.from(victim.email).toString("base64url")}.${issued}.${nonce}.${mac}`;
    for (const cookie of [
      forged,
      `${Buffer.from(victim.email).toString("base64url")}.${issued}.${nonce}.${"A".repeat(43)}`,
    ]) {
      const f = new Client(app.url);
      const token = await f.csrfToken();
      const r = await f.postSignIn("password", { email: victim.email, password: victim.password }, token, {
        cookie: `${f.cookieHeader()}; ${DEVICE_COOKIE}=${cookie}`,
      });
      const body = (await r.json()) as { url: string };
      expect(new URL(body.url).searchParams.get("error")).toBe("Throttled");
    }
  });

  it("a device's own budget holds: five wrong passwords from the owner's browser hold that browser, not the owner's other ones", async () => {
    const u = await makeUser("lockout-device");
    const [laptop, phone] = [new Client(app.url), new Client(app.url)];
    for (const b of [laptop, phone])
      expect(await b.signIn("password", { email: u.email, password: u.password })).toBeNull();
    for (let i = 0; i < 5; i++)
      expect(await laptop.signIn("password", { email: u.email, password: `typo-${i}-password` })).toBe(
        "CredentialsSignin",
      );
    expect(await laptop.signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    expect(await phone.signIn("password", { email: u.email, password: u.password })).toBeNull();
    // nor did the laptop's tries spend the account-wide budget of browsers never seen
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBeNull();
  });
});
