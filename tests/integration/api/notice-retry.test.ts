import { describe, expect, it } from "vitest";
import { Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR } from "../../support/fixtures";
import { waitForMail } from "../../support/mail";
import { closedPort, startApp } from "../../support/server";
import { makeUsers } from "../../support/users";

// One app instance at a time on purpose: every instance drains the one notice queue, so a healthy
// instance running beside the broken one could send the notice before the broken one fails it.

describe("notices when the mail server is down", () => {
  it("a notice that fails to send is kept and sent on a retry, without failing the request", async () => {
    const [owner, mentor, admin] = await makeUsers("nr-owner", "nr-mentor", "nr-admin");
    const broken = await startApp({ SMTP_URL: `smtp://127.0.0.1:${await closedPort()}`, NOTICE_RETRY_SECONDS: "1" });
    const db = await rawConnection();
    const queued = async () => {
      const [rows] = await db.query(
        "SELECT status, attempts, last_error FROM notices WHERE to_email = ? AND kind = 'verdict'",
        [owner.email],
      );
      return (rows as { status: string; attempts: number; last_error: string | null }[])[0];
    };
    try {
      const signedIn = async (u: { email: string; password: string }) => {
        const c = new Client(broken.url);
        expect(await c.signIn("password", { email: u.email, password: u.password })).toBeNull();
        return c;
      };
      const adminC = await signedIn(admin);
      const clubId = (await adminC.post("/api/clubs", { name: "Retry Club" })).json.club.id as string;
      await addMembership(clubId, owner.id, ["mechanic"]);
      await addMembership(clubId, mentor.id, ["mentor"]);
      const o = await signedIn(owner);
      const m = await signedIn(mentor);
      const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
      const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 30_000 })).json.check.id as string;
      const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;

      // the request succeeds although its notice cannot be sent
      expect((await m.put(`/api/shares/${shareId}/verdict`, { verdict: "stop-and-ask" })).status).toBe(200);
      await expect.poll(async () => (await queued())?.attempts ?? 0, { timeout: 15_000 }).toBeGreaterThan(0);
      const kept = (await queued())!;
      expect(kept.status).toBe("queued");
      expect(kept.last_error).toBeTruthy();
    } finally {
      await broken.stop();
    }
    // an instance that can reach the mail server picks the kept notice up on its retry timer
    const healthy = await startApp({ NOTICE_RETRY_SECONDS: "1" });
    try {
      await waitForMail(owner.email, /Review verdict: stop and ask/, 30_000);
      await expect.poll(async () => (await queued())?.status, { timeout: 10_000 }).toBe("sent");
    } finally {
      await healthy.stop();
      await db.end();
    }
  });
});
