import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { makeUser } from "../../support/fixtures";
import { linkToken, waitForMail } from "../../support/mail";
import { appPerFile } from "../../support/per-file";

/**
 * Which addresses have accounts (issue 24, item 3; OWASP ASVS 5.0 V6 Authentication: the answers
 * to sign-up and sign-in must not tell whether an account exists). The attacker signs up with an
 * address and a password, then signs in with them: a new address used to answer "Unverified", an
 * existing one "CredentialsSignin".
 */
const app = appPerFile();

const fresh = (tag: string) => `${tag}-${crypto.randomUUID().slice(0, 8)}@test.example`;

/** What the attacker sees: the sign-up's answer and the sign-in's answer with the same password. */
async function probe(email: string, password: string) {
  const c = new Client(app.url);
  const up = await c.post("/api/account/sign-up", { email, name: "Probe Person", password });
  return { signUp: { status: up.status, body: up.json }, signIn: await c.signIn("password", { email, password }) };
}

describe("sign-up then sign-in does not tell which addresses have accounts", () => {
  it("a new address, a confirmed account and an unconfirmed one all answer the same", async () => {
    const newcomer = await probe(fresh("new"), "probe-password-41");
    const existing = await makeUser("existing");
    const confirmed = await probe(existing.email, "probe-password-42");
    const waiting = fresh("waiting");
    expect(
      (
        await new Client(app.url).post("/api/account/sign-up", {
          email: waiting,
          name: "First Comer",
          password: "first-comer-pass-1",
        })
      ).status,
    ).toBe(202);
    const unconfirmed = await probe(waiting, "probe-password-43");

    expect(newcomer).toEqual(confirmed);
    expect(unconfirmed).toEqual(confirmed);
    expect(confirmed.signIn).toBe("CredentialsSignin");
  });

  it("the newcomer's path still works: the mail's link and the same password, then the sign-in", async () => {
    const email = fresh("newcomer");
    const c = new Client(app.url);
    expect(
      (await c.post("/api/account/sign-up", { email, name: "Nova Lindqvist", password: "newcomer-pass-77" })).status,
    ).toBe(202);
    expect(await c.signIn("password", { email, password: "newcomer-pass-77" })).toBe("CredentialsSignin");
    const token = linkToken(await waitForMail(email, /Confirm your e-mail/), "/verify");
    expect((await c.post("/api/account/verify", { token, password: "newcomer-pass-77" })).status).toBe(200);
    expect(await c.signIn("password", { email, password: "newcomer-pass-77" })).toBeNull();
    expect((await c.get("/api/account")).json.user.email).toBe(email);
  });
});
