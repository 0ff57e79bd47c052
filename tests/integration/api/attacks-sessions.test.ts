import { describe, expect, it } from "vitest";
import { Client, signedInClient } from "../../support/api";
import { makeUser } from "../../support/fixtures";
import { inbox, linkToken } from "../../support/mail";
import { appPerFile } from "../../support/per-file";

/**
 * Sessions and links that outlive what should end them (issue 24, item 12; OWASP ASVS 5.0 V7
 * Session Management, V6 Authentication). A "phone" here is a Client with its own cookie jar.
 */
const app = appPerFile();

/** The next mail to `address` whose subject matches: one that was not there before `before` was counted. */
async function nextMail(address: string, subject: RegExp, before: number) {
  for (let i = 0; i < 75; i++) {
    const found = (await inbox(address)).filter((m) => subject.test(m.subject));
    if (found.length > before) return found.at(-1)!;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`no new mail to ${address} matching ${subject}`);
}
const count = async (address: string, subject: RegExp) =>
  (await inbox(address)).filter((m) => subject.test(m.subject)).length;
const RESET = /Choose a new Lashwright password/;
const SIGNIN = /sign-in link/;

async function resetLink(email: string) {
  const before = await count(email, RESET);
  expect((await new Client(app.url).post("/api/account/password-reset", { email })).status).toBe(202);
  return linkToken(await nextMail(email, RESET, before), "/reset-password");
}

/** A new password chosen through a fresh reset link, on another device: accepted. */
async function chooseNewPassword(email: string, password: string) {
  const token = await resetLink(email);
  expect((await new Client(app.url).post("/api/account/password", { token, password })).status).toBe(200);
}

async function signInLink(email: string) {
  const before = await count(email, SIGNIN);
  expect((await new Client(app.url).post("/api/account/sign-in-link", { email })).status).toBe(202);
  return linkToken(await nextMail(email, SIGNIN, before), "/sign-in/link");
}

describe("/api/auth/session checks the session generation (12a)", () => {
  it("a cookie from before a sign-out elsewhere shows no name, and says it was revoked", async () => {
    const u = await makeUser("gen");
    const phone = await signedInClient(app.url, u);
    expect((await phone.get("/api/auth/session")).json.user.name).toBe("Test gen");
    // signing out on another phone ends every session of the account
    const other = await signedInClient(app.url, u);
    await other.signOut();
    const answer = await phone.get("/api/auth/session");
    expect(answer.status).toBe(200);
    expect(answer.json.user).toBeUndefined();
    expect(JSON.stringify(answer.json)).not.toContain("Test gen");
    expect(answer.json.revoked).toBe(true);
    // a new sign-in on that phone shows the name again
    expect(await phone.signIn("password", { email: u.email, password: u.password })).toBeNull();
    expect((await phone.get("/api/auth/session")).json.user.name).toBe("Test gen");
  });

  it("a revoked cookie cannot sign its owner out everywhere again", async () => {
    const u = await makeUser("lost");
    const lost = await signedInClient(app.url, u);
    await chooseNewPassword(u.email, "owner-new-pass-51");
    const owner = await signedInClient(app.url, { email: u.email, password: "owner-new-pass-51" });
    // the lost phone's old cookie asks to sign out: the owner's new session goes on
    await lost.signOut();
    expect((await owner.get("/api/account")).status).toBe(200);
  });
});

describe("a new password voids every link asked for before it (12b)", () => {
  it("an older reset link and a sign-in link stop working once a password is chosen", async () => {
    const u = await makeUser("links");
    const oldReset = await resetLink(u.email);
    const oldSignIn = await signInLink(u.email);
    await chooseNewPassword(u.email, "chosen-after-all-64");

    const again = await new Client(app.url).post("/api/account/password", {
      token: oldReset,
      password: "attacker-choice-99",
    });
    expect(again.status).toBe(400);
    expect(again.json.error.code).toBe("bad_token");
    expect(await new Client(app.url).signIn("email-link", { token: oldSignIn })).toBe("CredentialsSignin");
    expect(
      await new Client(app.url).signIn("password", { email: u.email, password: "chosen-after-all-64" }),
    ).toBeNull();
    // a link asked for after the new password works
    expect(await new Client(app.url).signIn("email-link", { token: await signInLink(u.email) })).toBeNull();
  });
});

describe("a phone whose session was ended elsewhere is told so at its next sync (12f, server side)", () => {
  it("push and pull answer 401 session_revoked to a revoked cookie, and plain unauthorized to none", async () => {
    const u = await makeUser("wipe");
    const phone = await signedInClient(app.url, u);
    const clientId = crypto.randomUUID();
    expect((await phone.post("/api/sync/pull", { cursor: null })).status).toBe(200);
    // signed out everywhere from another phone
    await (await signedInClient(app.url, u)).signOut();
    for (const [path, body] of [
      ["/api/sync/push", { clientId, mutations: [] }],
      ["/api/sync/pull", { cursor: null }],
    ] as const) {
      const res = await phone.post(path, body);
      expect(res.status, path).toBe(401);
      expect(res.json.error.code, path).toBe("session_revoked");
      const nobody = await new Client(app.url).post(path, body);
      expect(nobody.status, path).toBe(401);
      expect(nobody.json.error.code, path).toBe("unauthorized");
    }
    // a cookie that is not ours earns no "revoked": it proves nothing about any account
    const forged = await fetch(`${app.url}/api/sync/pull`, {
      method: "POST",
      headers: { origin: app.url, "content-type": "application/json", cookie: "next-auth.session-token=not-a-token" },
      body: "{}",
    });
    expect(((await forged.json()) as { error: { code: string } }).error.code).toBe("unauthorized");
  });

  it("after a password reset the same", async () => {
    const u = await makeUser("wipe2");
    const phone = await signedInClient(app.url, u);
    await chooseNewPassword(u.email, "reset-from-pc-38");
    const res = await phone.post("/api/sync/pull", { cursor: null });
    expect(res.status).toBe(401);
    expect(res.json.error.code).toBe("session_revoked");
    expect((await phone.get("/api/auth/session")).json).toEqual({ revoked: true });
  });
});
