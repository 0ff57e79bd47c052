import { readFileSync, writeFileSync } from "node:fs";
import mysql from "mysql2/promise";
import { describe, expect, it } from "vitest";
import { Client, signedInClient } from "../../support/api";
import { rawConnection, testDbUrl } from "../../support/db";
import { addMembership, ENGINE_FOUR, makeUser } from "../../support/fixtures";
import { cameraJpeg, photoForm, storedKeys } from "../../support/photos";
import { inbox, linkToken, waitForMail } from "../../support/mail";
import { startApp, type App } from "../../support/server";
import { hashPassword } from "@/server/password";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

/**
 * What an attacker tries first, one test per attack (issue 15). References beside each:
 * OWASP ASVS 5.0 (V3 Web Frontend Security, V4 API and Web Service, V5 File Handling, V6
 * Authentication, V7 Session Management) and NIST SP 800-63B (chapter and section named where sure).
 */
// the server prints a line per password hash it computes: the timing tests below count work
const app = appPerFile({ LASHWRIGHT_COUNT_HASHES: "1" });

const fresh = (tag: string) => `${tag}-${crypto.randomUUID().slice(0, 8)}@test.example`;

/** A verified user whose password is hashed as the app hashes (server/password.ts), so a check takes real time. */
async function userAtRealCost(tag: string) {
  const email = fresh(tag);
  const password = "right-password-12";
  const c = await mysql.createConnection({ uri: testDbUrl() });
  await c.query(
    "INSERT INTO users (id, email, name, password_hash, email_verified_at) VALUES (UUID(), ?, ?, ?, NOW(3))",
    [email, `Test ${tag}`, await hashPassword(password)],
  );
  await c.end();
  return { email, password };
}

async function signInByLink(c: Client, email: string) {
  expect((await c.post("/api/account/sign-in-link", { email })).status).toBe(202);
  return c.signIn("email-link", { token: linkToken(await waitForMail(email, /sign-in link/), "/sign-in/link") });
}

/** Someone else signs up first with the owner's address and a password of their choosing (accepted: 202). */
async function attackerSignsUp(victim: string, password: string) {
  const attacker = new Client(app.url);
  expect((await attacker.post("/api/account/sign-up", { email: victim, name: "Not The Owner", password })).status).toBe(
    202,
  );
}

describe("account takeover by signing up first (ASVS V6 Authentication; NIST SP 800-63B authenticator binding)", () => {
  it("a password chosen before the owner proved the address stops working once they sign in by a link, and the owner is told", async () => {
    const victim = fresh("victim");
    await attackerSignsUp(victim, "attacker-chose-this-1");
    // the real owner later signs in with an e-mail link: that proves the address
    const owner = new Client(app.url);
    expect(await signInByLink(owner, victim)).toBeNull();
    expect((await owner.get("/api/account")).json.user.email).toBe(victim);
    // the attacker's password no longer opens the account
    expect(await new Client(app.url).signIn("password", { email: victim, password: "attacker-chose-this-1" })).toBe(
      "CredentialsSignin",
    );
    const told = await waitForMail(victim, /removed a password/);
    expect(told.text).toMatch(/forgot-password/);
    // the owner's own session goes on working
    expect((await owner.get("/api/account")).status).toBe(200);
  });

  it("the owner clicking the confirmation mail the attacker's sign-up caused does not confirm the attacker's password", async () => {
    const victim = fresh("victim2");
    await attackerSignsUp(victim, "attacker-chose-this-2");
    const token = linkToken(await waitForMail(victim, /Confirm your e-mail/), "/verify");
    // the owner opens the link: without the sign-up's password it confirms nothing
    const owner = new Client(app.url);
    expect((await owner.post("/api/account/verify", { token })).status).toBe(422);
    expect((await owner.post("/api/account/verify", { token, password: "owner-guesses-something" })).status).toBe(422);
    expect(await new Client(app.url).signIn("password", { email: victim, password: "attacker-chose-this-2" })).toBe(
      "CredentialsSignin",
    );
    // guessing the sign-up's password through the link is throttled like a sign-in (5 in 15 minutes)
    for (let i = 0; i < 4; i++)
      expect((await owner.post("/api/account/verify", { token, password: `guess-number-${i}` })).status).toBe(422);
    expect((await owner.post("/api/account/verify", { token, password: "attacker-chose-this-2" })).status).toBe(429);
    // the page's way out: the owner chooses their own password, which confirms the address
    expect((await owner.post("/api/account/password-reset", { email: victim })).status).toBe(202);
    const reset = linkToken(await waitForMail(victim, /Choose a new Lashwright password/), "/reset-password");
    expect((await owner.post("/api/account/password", { token: reset, password: "owner-own-choice-9" })).status).toBe(
      200,
    );
    expect(await new Client(app.url).signIn("password", { email: victim, password: "attacker-chose-this-2" })).toBe(
      "CredentialsSignin",
    );
    expect(await new Client(app.url).signIn("password", { email: victim, password: "owner-own-choice-9" })).toBeNull();
  });
});

describe("sign-in throttle (ASVS V6 Authentication; NIST SP 800-63B 5.2.2 rate limiting)", () => {
  it("40 guesses sent at once get at most 5 password checks (counted in hashes), and the right password sent after them is refused unchecked", async () => {
    const u = await userAtRealCost("race");
    const before = hashesSoFar();
    const answers = await Promise.all(
      Array.from({ length: 40 }, (_, i) =>
        new Client(app.url).signIn("password", { email: u.email, password: `wrong-guess-${i}-xx` }),
      ),
    );
    const checked = answers.filter((a) => a !== "Throttled").length;
    expect(checked).toBeLessThanOrEqual(5);
    // each answer that was not Throttled cost exactly one hash, and the others none
    await expect.poll(hashesSoFar).toBe(before + checked);
    // ordered by the answers, not a head start: the right password after all 40 is refused unchecked
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    expect(hashesSoFar()).toBe(before + checked);
  });

  it("a locked account is still reachable by an e-mail link, so a stranger's guesses lock nobody out", async () => {
    const u = await makeUser("locked");
    for (let i = 0; i < 5; i++)
      await new Client(app.url).signIn("password", { email: u.email, password: `stranger-guess-${i}` });
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBe("Throttled");
    const owner = new Client(app.url);
    expect(await signInByLink(owner, u.email)).toBeNull();
    expect((await owner.get("/api/account")).json.user.email).toBe(u.email);
  });

  it("a forged X-Forwarded-For per guess does not escape the per-address limit behind a trusted proxy", async () => {
    const proxied = await startApp({ TRUSTED_PROXIES: "1" });
    try {
      const users = await Promise.all(Array.from({ length: 21 }, (_, i) => makeUser(`spray${i}`)));
      // one wrong guess per account (under each account's limit), a new forged address each time;
      // the proxy appends the address it saw, which is the only one believed
      const answers = [];
      for (const [i, u] of users.entries()) {
        answers.push(
          await new Client(proxied.url).signIn(
            "password",
            { email: u.email, password: "spray-guess-1" },
            { "x-forwarded-for": `198.51.100.${i}, 203.0.113.7` },
          ),
        );
      }
      expect(answers.slice(0, 20).every((a) => a === "CredentialsSignin")).toBe(true);
      expect(answers[20]).toBe("Throttled");
      // another caller behind the same proxy is not held back
      const other = await makeUser("spray-other");
      expect(
        await new Client(proxied.url).signIn(
          "password",
          { email: other.email, password: other.password },
          { "x-forwarded-for": "203.0.113.8" },
        ),
      ).toBeNull();
    } finally {
      await proxied.stop();
    }
  });
});

describe("login forgery through a sign-in link (ASVS V7 Session Management; V3 Web Frontend Security)", () => {
  it("a link for another account does not replace the session of whoever is signed in, and stays usable by its owner", async () => {
    const victim = await makeUser("forged-victim");
    const attacker = await makeUser("forged-attacker");
    expect((await new Client(app.url).post("/api/account/sign-in-link", { email: attacker.email })).status).toBe(202);
    const token = linkToken(await waitForMail(attacker.email, /sign-in link/), "/sign-in/link");
    // the link page names the account before anything happens
    const named = await new Client(app.url).post("/api/account/sign-in-link/account", { token });
    expect(named.json.account).toEqual({ email: attacker.email });

    const v = await signedInClient(app.url, victim);
    expect(await v.signIn("email-link", { token })).toBe("SignedInAsOther");
    expect((await v.get("/api/account")).json.user.email).toBe(victim.email);
    // the refused attempt did not use the link up
    const a = new Client(app.url);
    expect(await a.signIn("email-link", { token })).toBeNull();
    expect((await a.get("/api/account")).json.user.email).toBe(attacker.email);
  });
});

/** A line of the server process's /proc/PID/<file>, as a number. */
function procNumber(a: App, file: "status" | "io", key: string): number {
  const m = new RegExp(`^${key}:\\s+(\\d+)`, "m").exec(readFileSync(`/proc/${a.pid()}/${file}`, "utf8"));
  return Number(m![1]);
}
const MB = 1024 * 1024;

/**
 * What the server process does while one request runs: the bytes it read through system calls (its
 * sockets included: /proc/PID/io rchar) and its memory peak. The kernel starts a fresh peak on
 * writing "5" to clear_refs (proc(5)), so a larger peak earlier in the file cannot hide this one.
 */
async function serverWork<T>(a: App, run: () => Promise<T>) {
  writeFileSync(`/proc/${a.pid()}/clear_refs`, "5");
  const rss = procNumber(a, "status", "VmRSS") / 1024;
  const read = procNumber(a, "io", "rchar");
  const result = await run();
  return {
    result,
    readMb: (procNumber(a, "io", "rchar") - read) / MB,
    peakGrowthMb: procNumber(a, "status", "VmHWM") / 1024 - rss,
  };
}

/** A body of `mb` megabytes sent chunked (no Content-Length), counting how much the client was asked for. */
function chunked(mb: number, head = new Uint8Array(0)) {
  let sent = 0;
  const chunk = new Uint8Array(MB).fill(0x61);
  const body = new ReadableStream<Uint8Array>({
    start(c) {
      if (head.byteLength) c.enqueue(head);
    },
    pull(c) {
      if (sent >= mb) return c.close();
      sent++;
      c.enqueue(chunk);
    },
  });
  return { body, sentMb: () => sent };
}

/**
 * The answer to a body the server refuses part-way: its status, or "closed" when the server closed
 * the connection under the upload (the socket ended or was reset). Any other failure (refused
 * connection, a timeout, a bad URL) is thrown: it is not the server stopping the read. The server
 * must still answer afterwards, so a crash is not taken for a close either.
 */
async function sendChunked(
  c: Client,
  path: string,
  body: ReadableStream<Uint8Array>,
  contentType: string,
): Promise<number | "closed"> {
  try {
    const res = await c.raw("POST", path, { body, headers: { "content-type": contentType } });
    return res.status;
  } catch (e) {
    const code = (e as { cause?: { code?: string } }).cause?.code;
    if (!code || !["UND_ERR_SOCKET", "ECONNRESET", "EPIPE"].includes(code)) throw e;
    return "closed";
  } finally {
    expect((await fetch(`${app.url}/`).catch(() => null))?.status, "the server still answers").toBeLessThan(500);
  }
}

// Bounds with a wide margin, not timings: read whole, the 150 MB body is 150 MB read; the limits are
// 256 KiB (a JSON body, server/http.ts) and 10 MiB plus 64 KiB (a photo form, server/photos.ts), and
// what the kernel had buffered before the read stopped adds at most a few MB (its socket buffers).
const READ_BOUND_MB = 24;
const PEAK_BOUND_MB = 64;

describe("unbounded request bodies (ASVS V4 API and Web Service; V5 File Handling)", () => {
  it("a 150 MB chunked body to an anonymous route is stopped at the limit, not read whole", async () => {
    const upload = chunked(150);
    const {
      result: status,
      readMb,
      peakGrowthMb,
    } = await serverWork(app, () =>
      sendChunked(new Client(app.url), "/api/account/password-reset", upload.body, "application/json"),
    );
    console.log(
      `[attacks] JSON body: ${status}, server read ${readMb.toFixed(1)} MB, peak grew ${peakGrowthMb.toFixed(1)} MB, client sent ${upload.sentMb()} MB`,
    );
    expect([413, "closed"]).toContain(status);
    expect(readMb).toBeLessThan(READ_BOUND_MB);
    expect(peakGrowthMb).toBeLessThan(PEAK_BOUND_MB);
  });

  it("a 150 MB chunked photo form is stopped at the photo limit", async () => {
    const u = await makeUser("big-photo");
    const c = await signedInClient(app.url, u);
    const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const checkId = (await c.post(`/api/engines/${engineId}/checks`, { odometer: 1 })).json.check.id as string;
    const boundary = "lashwright-boundary";
    const head = new TextEncoder().encode(
      `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="x.jpg"\r\nContent-Type: image/jpeg\r\n\r\n`,
    );
    const upload = chunked(150, head);
    const {
      result: status,
      readMb,
      peakGrowthMb,
    } = await serverWork(app, () =>
      sendChunked(c, `/api/checks/${checkId}/photos`, upload.body, `multipart/form-data; boundary=${boundary}`),
    );
    console.log(
      `[attacks] photo form: ${status}, server read ${readMb.toFixed(1)} MB, peak grew ${peakGrowthMb.toFixed(1)} MB, client sent ${upload.sentMb()} MB`,
    );
    expect([413, "closed"]).toContain(status);
    expect(readMb).toBeLessThan(READ_BOUND_MB);
    expect(peakGrowthMb).toBeLessThan(PEAK_BOUND_MB);
    // nothing of it was kept
    expect((await c.get(`/api/checks/${checkId}/photos`)).json.items).toEqual([]);
  });
});

/** Password hashes the server has computed so far (server/password.ts prints one line each). */
const hashesSoFar = () =>
  app
    .output()
    .split("\n")
    .filter((l) => l.includes("[password] hash computed")).length;

describe("which addresses have accounts, by timing (ASVS V6 Authentication; NIST SP 800-63B)", () => {
  // Equal work on both paths, counted, not timed: the password hash is the only costly step of
  // either request (before the fix, sign-up hashed only for a new address: 12-30 ms against 300-1,380).
  it("sign-up hashes the password once whether or not the address has an account, and answers the same", async () => {
    const before = hashesSoFar();
    for (let i = 0; i < 3; i++) {
      const u = await makeUser(`timing-known${i}`);
      const k = await new Client(app.url).post("/api/account/sign-up", {
        email: u.email,
        name: "Timing",
        password: "timing-password-1",
      });
      await expect.poll(hashesSoFar).toBe(before + 2 * i + 1);
      const n = await new Client(app.url).post("/api/account/sign-up", {
        email: fresh("timing-new"),
        name: "Timing",
        password: "timing-password-1",
      });
      await expect.poll(hashesSoFar).toBe(before + 2 * i + 2);
      expect([k.status, k.json]).toEqual([n.status, n.json]);
    }
  });

  it("a password-reset request does the same work for an address that has an account as for one that has none", async () => {
    // the request only queues the mail (the queue looks the account up when it sends): no hash on
    // either path, the same answer
    const u = await makeUser("reset-known");
    const before = hashesSoFar();
    const k = await new Client(app.url).post("/api/account/password-reset", { email: u.email });
    const n = await new Client(app.url).post("/api/account/password-reset", { email: fresh("reset-nobody") });
    expect([k.status, k.json]).toEqual([n.status, n.json]);
    expect(k.status).toBe(202);
    expect(hashesSoFar()).toBe(before);
  });

  it("e-mails asked for one address are throttled: the 6th in 15 minutes is refused, and the mailbox gets exactly the 5", async () => {
    const u = await makeUser("mail-flood");
    const c = new Client(app.url);
    const statuses = [];
    for (let i = 0; i < 3; i++) statuses.push((await c.post("/api/account/password-reset", { email: u.email })).status);
    for (let i = 0; i < 2; i++) statuses.push((await c.post("/api/account/sign-in-link", { email: u.email })).status);
    const sixth = await c.post("/api/account/sign-up", { email: u.email, name: "Flood", password: "flood-password-1" });
    expect(statuses).toEqual([202, 202, 202, 202, 202]);
    expect(sixth.status).toBe(429);
    expect(sixth.json.error.code).toBe("throttled");
    // the five asked for all arrive (account mail is never held back), and the refused sixth never does
    await expect.poll(async () => (await inbox(u.email)).length, { timeout: 20_000 }).toBe(5);
    const mails = await inbox(u.email);
    expect(mails.some((m) => /already have a Lashwright account/i.test(m.subject ?? ""))).toBe(false);
  });
});

describe("cross-site requests (ASVS V3 Web Frontend Security; V4 API and Web Service)", () => {
  const engine = { ...ENGINE_FOUR, name: "Forged" };

  it("a text/plain body (what a cross-site form can send) is refused and changes nothing", async () => {
    const c = await signedInClient(app.url, await makeUser("plain"));
    const res = await c.raw("POST", "/api/engines", {
      body: JSON.stringify(engine),
      headers: { "content-type": "text/plain" },
    });
    expect(res.status).toBe(415);
    expect((await c.get("/api/engines")).json.items).toEqual([]);
  });

  it("a request from another origin, or one naming no origin at all, is refused on every state-changing route", async () => {
    const c = await signedInClient(app.url, await makeUser("cross"));
    const json = { "content-type": "application/json" };
    for (const headers of [
      { ...json, origin: "https://evil.example" },
      { ...json, origin: "null" },
      { ...json, origin: app.url, "sec-fetch-site": "cross-site" },
      { ...json, origin: "", "sec-fetch-site": "same-site" },
      { ...json, origin: "" },
    ]) {
      const res = await c.raw("POST", "/api/engines", { body: JSON.stringify(engine), headers });
      expect(res.status, JSON.stringify(headers)).toBe(403);
      expect(((await res.json()) as { error: { code: string } }).error.code).toBe("cross_site");
    }
    expect(
      (
        await c.raw("PATCH", "/api/account", {
          body: JSON.stringify({ name: "Renamed" }),
          headers: { ...json, origin: "https://evil.example" },
        })
      ).status,
    ).toBe(403);
    expect((await c.get("/api/account")).json.user.name).not.toBe("Renamed");
    // the app's own pages: Sec-Fetch-Site same-origin, or our Origin
    expect(
      (
        await c.raw("POST", "/api/engines", {
          body: JSON.stringify(engine),
          headers: { ...json, origin: "", "sec-fetch-site": "same-origin" },
        })
      ).status,
    ).toBe(201);
    expect((await c.get("/api/engines")).json.items).toHaveLength(1);
  });

  it("a sign-in posted from another site is refused", async () => {
    const u = await makeUser("cross-signin");
    expect(
      await new Client(app.url).signIn(
        "password",
        { email: u.email, password: u.password },
        { origin: "https://evil.example" },
      ),
    ).toBe("no-url");
  });
});

/** Wait, within a bound, until `probe` answers something other than undefined. */
async function eventually<T>(probe: () => Promise<T | undefined>, ms = 15_000): Promise<T> {
  const t0 = Date.now();
  for (;;) {
    const v = await probe();
    if (v !== undefined) return v;
    if (Date.now() - t0 > ms) throw new Error("timed out waiting");
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function sql<T>(query: string, args: unknown[]): Promise<T[]> {
  const db = await rawConnection();
  const [rows] = await db.query(query, args);
  await db.end();
  return rows as T[];
}

describe("notices to people who lost access (ASVS V8 Authorization, checked at the moment of use)", () => {
  it("after the share is withdrawn and the mentor removed, the owner's new comment is not e-mailed to that mentor", async () => {
    const [owner, mentor] = await Promise.all([makeUser("notice-owner"), makeUser("notice-mentor")]);
    const o = await signedInClient(app.url, owner);
    const m = await signedInClient(app.url, mentor);
    const clubId = (await o.post("/api/clubs", { name: "Notice Club" })).json.club.id as string;
    await addMembership(clubId, mentor.id, ["mechanic", "mentor"]);
    const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 5 })).json.check.id as string;
    const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
    expect((await m.post(`/api/checks/${checkId}/comments`, { body: "Which blades did you use?" })).status).toBe(201);
    // the mentor has taken part, so the owner's next comment would be theirs to hear about; now both doors close
    expect((await o.del(`/api/shares/${shareId}`)).status).toBe(204);
    expect((await o.del(`/api/clubs/${clubId}/members/${mentor.id}`)).status).toBe(204);
    expect(
      (await o.post(`/api/checks/${checkId}/comments`, { body: "Private follow-up after the withdrawal" })).status,
    ).toBe(201);
    const status = await eventually(async () => {
      const rows = await sql<{ status: string }>(
        "SELECT status FROM notices WHERE to_user_id = ? AND kind = 'comment'",
        [mentor.id],
      );
      return rows.length && rows.every((r) => r.status === "sent" || r.status === "dropped" || r.status === "failed")
        ? rows.map((r) => r.status)
        : undefined;
    });
    expect(status).toEqual(["dropped"]);
    expect((await inbox(mentor.email)).filter((x) => /New comment/.test(x.subject))).toEqual([]);
  });
});

describe("invitations (ASVS V8 Authorization; V16 Security Logging)", () => {
  it("a removed admin's pending invitation stops working, an invitation can be withdrawn, and the club log records it all", async () => {
    const [a, b, x, y, z] = await Promise.all(
      ["inv-admin", "inv-admin2", "inv-x", "inv-y", "inv-z"].map((t) => makeUser(t)),
    );
    const ca = await signedInClient(app.url, a!);
    const cb = await signedInClient(app.url, b!);
    const clubId = (await ca.post("/api/clubs", { name: "Invite Club" })).json.club.id as string;
    await addMembership(clubId, b!.id, ["mechanic"]);
    expect((await ca.put(`/api/clubs/${clubId}/members/${b!.id}`, { roles: ["admin", "mechanic"] })).status).toBe(200);
    expect((await cb.post(`/api/clubs/${clubId}/invites`, { email: x!.email, role: "mentor" })).status).toBe(201);
    const xToken = linkToken(await waitForMail(x!.email, /invites you/), "/invite");
    // B loses the admin role: B's pending invitation ends with it
    expect((await ca.put(`/api/clubs/${clubId}/members/${b!.id}`, { roles: ["mechanic"] })).status).toBe(200);
    const cx = await signedInClient(app.url, x!);
    expect((await cx.post("/api/invites/accept", { token: xToken })).status).toBe(400);
    expect((await cx.get(`/api/clubs/${clubId}/members`)).status).toBe(404);

    // an invitation withdrawn by an admin stops working; another one still does
    const yInvite = (await ca.post(`/api/clubs/${clubId}/invites`, { email: y!.email, role: "mechanic" })).json.invite
      .id as string;
    const yToken = linkToken(await waitForMail(y!.email, /invites you/), "/invite");
    expect((await ca.del(`/api/clubs/${clubId}/invites/${yInvite}`)).status).toBe(204);
    expect((await (await signedInClient(app.url, y!)).post("/api/invites/accept", { token: yToken })).status).toBe(400);
    expect((await ca.post(`/api/clubs/${clubId}/invites`, { email: z!.email, role: "mechanic" })).status).toBe(201);
    const zToken = linkToken(await waitForMail(z!.email, /invites you/), "/invite");
    expect((await (await signedInClient(app.url, z!)).post("/api/invites/accept", { token: zToken })).status).toBe(200);

    // the log: role changes and invitations, readable by the club's admins only
    expect((await cb.get(`/api/clubs/${clubId}/log`)).status).toBe(403);
    const items = (await ca.get(`/api/clubs/${clubId}/log?limit=50`)).json.items as {
      action: string;
      detail: string;
      subjectName: string | null;
      subjectEmail: string | null;
      actorName: string | null;
    }[];
    const lines = items.map((i) => `${i.action} ${i.subjectName ?? i.subjectEmail} ${i.detail}`).reverse();
    expect(lines).toEqual([
      `roles-changed Test inv-admin none → admin, mechanic`,
      `roles-changed Test inv-admin2 mechanic → admin, mechanic`,
      `invite-sent ${x!.email} mentor`,
      `roles-changed Test inv-admin2 admin, mechanic → mechanic`,
      `invites-ended Test inv-admin2 1 pending`,
      `invite-sent ${y!.email} mechanic`,
      `invite-withdrawn ${y!.email} mechanic`,
      `invite-sent ${z!.email} mechanic`,
      `invite-accepted Test inv-z none → mechanic`,
    ]);
  });
});

describe("smaller ones", () => {
  it("a loan request naming someone else's check, or no check at all, is refused and stores nothing", async () => {
    const [lender, asker, other] = await makeUsers("loan-lender", "loan-asker", "loan-other");
    const l = await signedInClient(app.url, lender);
    const a = await signedInClient(app.url, asker);
    const clubId = (await l.post("/api/clubs", { name: "Loan Club" })).json.club.id as string;
    await addMembership(clubId, asker.id, ["mechanic"]);
    await l.post("/api/tray", { size: 2.6, count: 2 });
    const offerId = (await l.post(`/api/clubs/${clubId}/pool`, { size: 2.6, count: 2 })).json.offer.id as string;
    const oc = await signedInClient(app.url, other);
    const otherEngine = (await oc.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const othersCheck = (await oc.post(`/api/engines/${otherEngine}/checks`, { odometer: 3 })).json.check.id as string;
    for (const checkId of [othersCheck, crypto.randomUUID()]) {
      const res = await a.post("/api/borrows", { offerId, count: 1, checkId });
      expect(res.status, checkId).toBe(404);
      expect(res.json.error.code).toBe("not_found");
    }
    expect(await sql("SELECT id FROM borrow_requests WHERE borrower_id = ?", [asker.id])).toEqual([]);
    // the asker's own check is fine
    const ownEngine = (await a.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const ownCheck = (await a.post(`/api/engines/${ownEngine}/checks`, { odometer: 3 })).json.check.id as string;
    expect((await a.post("/api/borrows", { offerId, count: 1, checkId: ownCheck })).status).toBe(201);
  });

  it("deleting a check, or an engine through sync, takes their photos out of the object store", async () => {
    const c = await signedInClient(app.url, await makeUser("photo-gone"));
    const jpeg = await cameraJpeg(320, 240);
    const engineId = (await c.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const [first, second] = [
      (await c.post(`/api/engines/${engineId}/checks`, { odometer: 1 })).json.check.id as string,
      (await c.post(`/api/engines/${engineId}/checks`, { odometer: 2 })).json.check.id as string,
    ];
    for (const checkId of [first, second])
      expect((await c.form("POST", `/api/checks/${checkId}/photos`, photoForm(jpeg))).status).toBe(201);
    expect(await storedKeys(`checks/${first}/`)).toHaveLength(1);
    expect((await c.del(`/api/checks/${first}`)).status).toBe(204);
    await eventually(async () => ((await storedKeys(`checks/${first}/`)).length === 0 ? true : undefined));
    expect(await storedKeys(`checks/${second}/`)).toHaveLength(1);
    const push = await c.post("/api/sync/push", {
      clientId: crypto.randomUUID(),
      mutations: [{ id: 1, name: "engine.delete/1", args: { id: engineId } }],
    });
    expect(push.json.rejected).toEqual([]);
    await eventually(async () => ((await storedKeys(`checks/${second}/`)).length === 0 ? true : undefined));
  });

  it("behind HTTPS a session cookie without its __Secure- prefix is not accepted (ASVS V7 Session Management)", async () => {
    const secure = await startApp({ NEXTAUTH_URL: "https://lashwright.example" });
    try {
      const u = await makeUser("cookie-prefix");
      const c = new Client(secure.url);
      expect(await c.signIn("password", u, { origin: "https://lashwright.example" })).toBeNull();
      const value = /__Secure-next-auth\.session-token=([^;]+)/.exec(c.cookieHeader())![1]!;
      const asks = (cookie: string) =>
        fetch(`${secure.url}/api/account`, { headers: { cookie } }).then((r) => r.status);
      expect(await asks(`__Secure-next-auth.session-token=${value}`)).toBe(200);
      expect(await asks(`next-auth.session-token=${value}`)).toBe(401);
    } finally {
      await secure.stop();
    }
  });
});
