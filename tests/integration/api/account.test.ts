import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { linkToken, waitForMail } from "../../support/mail";
import { rawConnection } from "../../support/db";
import { appPerFile } from "../../support/per-file";

const app = appPerFile();

describe("accounts through the API and the local mail catcher", () => {
  it("sign-up, e-mail verification, sign-in, password reset, sign-in with the new password", async () => {
    const email = `new-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const c = new Client(app.url);
    const up = await c.post("/api/account/sign-up", {
      email: email.toUpperCase(),
      name: "Nia Feldspar",
      password: "first-password-77",
    });
    expect(up.status).toBe(202);
    // unverified: refused like a wrong password, so a sign-up then sign-in tells nothing (attacks-enumeration)
    expect(await c.signIn("password", { email, password: "first-password-77" })).toBe("CredentialsSignin");

    const verify = await waitForMail(email, /Confirm your e-mail/);
    const token = linkToken(verify, "/verify");
    // the link alone does not confirm: the sign-up's password goes with it
    const noPassword = await c.post("/api/account/verify", { token });
    expect(noPassword.status).toBe(422);
    expect(noPassword.json.error.fields.password).toMatch(/missing/);
    expect((await c.post("/api/account/verify", { token, password: "first-password-77" })).status).toBe(200);
    expect((await c.post("/api/account/verify", { token, password: "first-password-77" })).status).toBe(400); // a link works once

    expect(await c.signIn("password", { email, password: "wrong-password-00" })).toBe("CredentialsSignin");
    expect(await c.signIn("password", { email, password: "first-password-77" })).toBeNull();
    const me = await c.get("/api/account");
    expect(me.status).toBe(200);
    expect(me.json.user).toMatchObject({ email, name: "Nia Feldspar" });
    expect(JSON.stringify(me.json)).not.toMatch(/password|hash|\$2[aby]\$/i);

    expect((await new Client(app.url).post("/api/account/password-reset", { email })).status).toBe(202);
    const reset = await waitForMail(email, /new Lashwright password/);
    const resetToken = linkToken(reset, "/reset-password");
    expect((await c.post("/api/account/password", { token: resetToken, password: "short" })).status).toBe(422);
    expect((await c.post("/api/account/password", { token: resetToken, password: "second-password-88" })).status).toBe(
      200,
    );
    // the new password ends the old session
    expect((await c.get("/api/account")).status).toBe(401);
    const fresh = new Client(app.url);
    expect(await fresh.signIn("password", { email, password: "first-password-77" })).toBe("CredentialsSignin");
    expect(await fresh.signIn("password", { email, password: "second-password-88" })).toBeNull();
    expect((await fresh.get("/api/account")).status).toBe(200);

    const db = await rawConnection();
    const [rows] = await db.query("SELECT password_hash FROM users WHERE email = ?", [email]);
    await db.end();
    // Argon2id at the OWASP Password Storage Cheat Sheet's parameters (m = 19456 KiB, t = 2, p = 1)
    expect((rows as { password_hash: string }[])[0]!.password_hash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
  });

  it("signs in by an e-mail link, once", async () => {
    const email = `link-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const c = new Client(app.url);
    await c.post("/api/account/sign-up", { email, name: "Oskar Tappet", password: "link-user-pass-1" });
    expect((await c.post("/api/account/sign-in-link", { email })).status).toBe(202);
    const mail = await waitForMail(email, /sign-in link/);
    const token = linkToken(mail, "/sign-in/link");
    expect(await c.signIn("email-link", { token })).toBeNull();
    expect((await c.get("/api/account")).json.user.email).toBe(email);
    expect(await new Client(app.url).signIn("email-link", { token })).toBe("CredentialsSignin");
  });

  it("answers the same for unknown addresses, and refuses weak passwords with the field named", async () => {
    const c = new Client(app.url);
    expect((await c.post("/api/account/password-reset", { email: "nobody-here@test.example" })).status).toBe(202);
    const weak = await c.post("/api/account/sign-up", {
      email: "weak@test.example",
      name: "W",
      password: "password123",
    });
    expect(weak.status).toBe(422);
    expect(weak.json.error).toMatchObject({
      code: "invalid",
      fields: { password: expect.stringMatching(/too common/) },
    });
    const bad = await c.post("/api/account/sign-up", {
      email: "not-an-email",
      name: "W",
      password: "long-enough-pass",
    });
    expect(bad.json.error.fields.email).toMatch(/valid e-mail/);
  });

  it("signing out makes the session unusable, even when the old cookie is replayed", async () => {
    const email = `out-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const c = new Client(app.url);
    await c.post("/api/account/sign-up", { email, name: "Pia Bucket", password: "sign-out-pass-9" });
    await c.post("/api/account/verify", {
      token: linkToken(await waitForMail(email, /Confirm/), "/verify"),
      password: "sign-out-pass-9",
    });
    await c.signIn("password", { email, password: "sign-out-pass-9" });
    const stolen = c.cookieHeader();
    expect((await c.get("/api/account")).status).toBe(200);
    await c.signOut();
    const replay = await fetch(`${app.url}/api/account`, { headers: { cookie: stolen } });
    expect(replay.status).toBe(401);
  });
});
