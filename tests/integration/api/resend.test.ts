import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { inbox, linkToken, waitForMail } from "../../support/mail";
import { appPerFile } from "../../support/per-file";

const app = appPerFile();

async function verifyNotices(email: string): Promise<number> {
  const db = await rawConnection();
  const [rows] = await db.query("SELECT COUNT(*) AS n FROM notices WHERE to_email = ? AND kind = 'verify'", [email]);
  await db.end();
  return Number((rows as { n: number }[])[0]!.n);
}

describe("sending the confirmation link again", () => {
  it("sends a fresh link to an unconfirmed account, as HTML with a real link and as plain text; the new link confirms", async () => {
    const email = `resend-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const c = new Client(app.url);
    expect(
      (await c.post("/api/account/sign-up", { email, name: "Rae Sender", password: "resend-pass-123" })).status,
    ).toBe(202);
    await waitForMail(email, /Confirm your e-mail/);
    const again = await c.post("/api/account/verify/resend", { email });
    expect(again.status).toBe(202);
    await expect.poll(async () => (await inbox(email)).length, { timeout: 15_000 }).toBe(2);
    const mail = await waitForMail(email, /Confirm your e-mail/);
    const token = linkToken(mail, "/verify");
    expect(mail.html).toContain(`href="${app.url}/verify?token=${token}"`);
    expect((await c.post("/api/account/verify", { token, password: "resend-pass-123" })).status).toBe(200);
    expect(await c.signIn("password", { email, password: "resend-pass-123" })).toBeNull();

    // confirmed now: asking again answers the same and queues nothing
    expect((await new Client(app.url).post("/api/account/verify/resend", { email })).status).toBe(202);
    expect(await verifyNotices(email)).toBe(2);
  });

  it("answers an unknown address the same and sends nothing", async () => {
    const email = `nobody-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const res = await new Client(app.url).post("/api/account/verify/resend", { email });
    expect(res.status).toBe(202);
    expect(res.json.message).toMatch(/If that address has an account/);
    expect(await verifyNotices(email)).toBe(0);
  });

  it("is throttled per address: the 4th request in 15 minutes is refused, for an unknown address as for a known one (OWASP ASVS 5.0 V6: anti-automation on mail-sending endpoints)", async () => {
    const known = `flood-${crypto.randomUUID().slice(0, 8)}@test.example`;
    await new Client(app.url).post("/api/account/sign-up", {
      email: known,
      name: "Flo Od",
      password: "flood-pass-1234",
    });
    const unknown = `flood-none-${crypto.randomUUID().slice(0, 8)}@test.example`;
    for (const email of [known, unknown]) {
      const statuses: number[] = [];
      for (let i = 0; i < 4; i++)
        statuses.push((await new Client(app.url).post("/api/account/verify/resend", { email })).status);
      expect(statuses).toEqual([202, 202, 202, 429]);
    }
    // the sign-up mail and three resent ones, no more
    expect(await verifyNotices(known)).toBe(4);
    // another address is not held back by this one's limit
    expect(
      (
        await new Client(app.url).post("/api/account/verify/resend", {
          email: `other-${crypto.randomUUID().slice(0, 8)}@test.example`,
        })
      ).status,
    ).toBe(202);
  });
});
