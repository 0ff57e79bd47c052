import { describe, expect, it } from "vitest";
import { Client, loopbackAddress, signedInClient } from "../../support/api";
import { rawConnection } from "../../support/db";
import { makeUser } from "../../support/fixtures";
import { appPerFile } from "../../support/per-file";

/**
 * Hashing flood (issue 24, item 6): sign-in tries for new e-mail addresses each cost a password hash
 * (the check runs against a dummy hash, so the time taken does not tell that the account is missing).
 * Defences: hashes run on libuv's thread pool behind a bounded queue (server/password.ts), and the
 * failed tries of one network address are budgeted, the address being the socket's unless a trusted
 * proxy is configured (server/throttle.ts, server/peer-address.ts).
 * Sources: OWASP ASVS 5.0 V2 Validation and Business Logic (anti-automation) and V6 Authentication;
 * NIST SP 800-63B 5.2.2 (rate limiting); OWASP Password Storage Cheat Sheet (Argon2id parameters).
 * The server prints a line per hash it computes (LASHWRIGHT_COUNT_HASHES=1): the tests count work.
 */
// production's pool (10, lib/env.ts) rather than the tests' single connection, so the latency
// printed is the one a user would see; other files keep the one-connection check
const app = appPerFile({ LASHWRIGHT_COUNT_HASHES: "1", DB_POOL_SIZE: "10" });

const printed = () =>
  app
    .output()
    .split("\n")
    .filter((l) => l.includes("[password] hash computed")).length;
/** Hashes counted so far, read once the server's output has stopped growing (it arrives on its own pipe). */
async function hashesSoFar() {
  for (let last = -1; ;) {
    const now = printed();
    if (now === last) return now;
    last = now;
    await new Promise((r) => setTimeout(r, 250));
  }
}
const fresh = (tag: string) => `${tag}-${crypto.randomUUID().slice(0, 8)}@test.example`;
/** Budget of failed sign-in tries per network address (server/throttle.ts). */
const PER_ADDRESS = 20;

/** A sign-in try as the browser sends it, with the status and Retry-After besides next-auth's error. */
async function tryPassword(c: Client, email: string, password: string) {
  const res = await c.signInAnswer("password", { email, password });
  const body = (await res.json().catch(() => ({}))) as { url?: string };
  return {
    status: res.status,
    retryAfter: res.headers.get("retry-after"),
    error: body.url ? new URL(body.url).searchParams.get("error") : "no-url",
  };
}

/** The signed-in user's cheapest request, asked again and again until `until` settles; each time taken. */
async function keepAsking(user: Client, until: Promise<unknown>, atLeast = 20) {
  let done = false;
  void until.finally(() => (done = true));
  const times: number[] = [];
  const statuses = new Set<number>();
  while (!done || times.length < atLeast) {
    const t0 = performance.now();
    statuses.add((await user.get("/api/account")).status);
    times.push(performance.now() - t0);
  }
  return { times, statuses };
}

const pct = (xs: number[], p: number) =>
  [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(p * xs.length))]!;
const latency = (xs: number[]) =>
  `p50 ${pct(xs, 0.5).toFixed(0)} ms, p95 ${pct(xs, 0.95).toFixed(0)} ms (n=${xs.length})`;

describe("hashing flood (OWASP ASVS 5.0 V2 anti-automation, V6 Authentication; NIST SP 800-63B 5.2.2)", () => {
  it("60 sign-in tries for new e-mail addresses from one network address: hashing stops at the address's budget, and a signed-in user is answered throughout", async () => {
    const owner = await makeUser("flood-owner");
    const user = await signedInClient(app.url, owner);
    // the counter counts: one failed try for a missing account costs at least one hash (the dummy's
    // first making counts too)
    const before0 = await hashesSoFar();
    expect(await new Client(app.url).signIn("password", { email: fresh("warm-up"), password: "warm-up-guess-1" })).toBe(
      "CredentialsSignin",
    );
    expect((await hashesSoFar()) - before0).toBeGreaterThanOrEqual(1);

    const idle = await keepAsking(user, Promise.resolve(), 40);
    const attacker = loopbackAddress(app.url)!;
    const before = await hashesSoFar();
    const flood = Promise.all(
      Array.from({ length: 60 }, (_, i) =>
        tryPassword(new Client(app.url, attacker), fresh(`flood${i}`), `flood-guess-${i}-xx`),
      ),
    );
    const during = await keepAsking(user, flood);
    const answers = await flood;
    const hashed = (await hashesSoFar()) - before;

    console.log(
      `[hashing flood, one address] ${hashed} hashes for 60 tries; answers ${JSON.stringify(count(answers.map((a) => `${a.status} ${a.error}`)))}; ` +
        `signed-in user's GET /api/account idle ${latency(idle.times)}, during the flood ${latency(during.times)}`,
    );
    expect(hashed).toBeLessThanOrEqual(PER_ADDRESS);
    expect(answers.every((a) => ["CredentialsSignin", "Throttled", "Busy"].includes(a.error ?? ""))).toBe(true);
    // refused before any hash: by the address's budget, or (given back to it) by a full queue
    expect(answers.filter((a) => a.error === "CredentialsSignin").length).toBe(hashed);
    expect(answers.filter((a) => a.error !== "CredentialsSignin").length).toBeGreaterThanOrEqual(60 - PER_ADDRESS);
    expect(answers.some((a) => a.error === "Throttled")).toBe(true);
    expect([...during.statuses]).toEqual([200]);
    // the address's budget is its own: another caller signs in at once
    expect(await new Client(app.url).signIn("password", { email: owner.email, password: owner.password })).toBeNull();
  });

  it("60 tries from 60 addresses: at most 60 hashes, a full queue answers 503 with Retry-After at once, and a signed-in user is answered throughout", async () => {
    const owner = await makeUser("spread-owner");
    const user = await signedInClient(app.url, owner);
    // the dummy hash exists before counting starts (made once per server)
    await new Client(app.url).signIn("password", { email: fresh("warm-up"), password: "warm-up-guess-2" });
    const idle = await keepAsking(user, Promise.resolve(), 40);
    const before = await hashesSoFar();
    const flood = Promise.all(
      Array.from({ length: 60 }, (_, i) =>
        tryPassword(new Client(app.url), fresh(`spread${i}`), `spread-guess-${i}-xx`),
      ),
    );
    const during = await keepAsking(user, flood);
    const answers = await flood;
    const hashed = (await hashesSoFar()) - before;
    console.log(
      `[hashing flood, 60 addresses] ${hashed} hashes for 60 tries; answers ${JSON.stringify(count(answers.map((a) => `${a.status} ${a.error}`)))}; ` +
        `signed-in user's GET /api/account idle ${latency(idle.times)}, during the flood ${latency(during.times)}`,
    );
    expect(hashed).toBeLessThanOrEqual(60);
    for (const a of answers) {
      if (a.error === "Busy") expect([a.status, Number(a.retryAfter) > 0]).toEqual([503, true]);
      else expect(a.error).toBe("CredentialsSignin");
    }
    // every try is either checked (one hash) or refused before its hash
    expect(answers.filter((a) => a.error === "CredentialsSignin").length).toBe(hashed);
    expect([...during.statuses]).toEqual([200]);
  });

  it("the address is the socket's: a new X-Forwarded-For per try does not escape the budget without a trusted proxy", async () => {
    const users = await Promise.all(Array.from({ length: PER_ADDRESS + 1 }, (_, i) => makeUser(`forged${i}`)));
    const from = loopbackAddress(app.url)!;
    const answers = [];
    for (const [i, u] of users.entries()) {
      answers.push(
        await new Client(app.url, from).signIn(
          "password",
          { email: u.email, password: "spray-guess-1" },
          { "x-forwarded-for": `198.51.100.${i}`, "x-real-ip": `198.51.100.${i}` },
        ),
      );
    }
    expect(answers.slice(0, PER_ADDRESS).every((a) => a === "CredentialsSignin")).toBe(true);
    expect(answers[PER_ADDRESS]).toBe("Throttled");
    // the same forged header from another socket address is a caller of its own
    const other = await makeUser("forged-other");
    expect(
      await new Client(app.url).signIn(
        "password",
        { email: other.email, password: other.password },
        { "x-forwarded-for": `198.51.100.${PER_ADDRESS}` },
      ),
    ).toBeNull();
  });

  it("a bcrypt hash made before keeps working and is replaced by Argon2id at the next sign-in", async () => {
    const u = await makeUser("legacy"); // fixtures store bcrypt
    const stored = async () => {
      const c = await rawConnection();
      const [rows] = await c.query("SELECT password_hash FROM users WHERE id = ?", [u.id]);
      await c.end();
      return (rows as { password_hash: string }[])[0]!.password_hash;
    };
    expect(await stored()).toMatch(/^\$2[aby]\$/);
    expect(await new Client(app.url).signIn("password", { email: u.email, password: "not-the-password" })).toBe(
      "CredentialsSignin",
    );
    expect(await stored()).toMatch(/^\$2[aby]\$/);
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBeNull();
    expect(await stored()).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(await new Client(app.url).signIn("password", { email: u.email, password: u.password })).toBeNull();
    expect(await new Client(app.url).signIn("password", { email: u.email, password: "not-the-password" })).toBe(
      "CredentialsSignin",
    );
  });
});

function count(xs: string[]) {
  const out: Record<string, number> = {};
  for (const x of xs) out[x] = (out[x] ?? 0) + 1;
  return out;
}
