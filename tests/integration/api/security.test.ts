import { LABEL_FORBIDDEN } from "@/lib/schemas/label";
import { describe, expect, it } from "vitest";
import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import { Client } from "../../support/api";
import { rawConnection } from "../../support/db";
import { addMembership, ENGINE_FOUR, FIXTURE_PASSWORD, makeUser } from "../../support/fixtures";
import { linkToken, waitForMail } from "../../support/mail";
import { routesOnDisk } from "../../support/routes";
import { startApp, type App } from "../../support/server";
import { appPerFile } from "../../support/per-file";
import { makeUsers } from "../../support/users";

/** Headers, cookies, passwords, secrets and hostile text: the security checks that need a server. */
const app = appPerFile();

async function signedIn(a: App, u: { email: string; password: string }) {
  const c = new Client(a.url);
  expect(await c.signIn("password", { email: u.email, password: u.password })).toBeNull();
  return c;
}

function pagesOnDisk(): string[] {
  const root = path.resolve(__dirname, "../../../app");
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const f of readdirSync(dir)) {
      const p = path.join(dir, f);
      if (statSync(p).isDirectory()) {
        if (f !== "api") walk(p);
      } else if (f === "page.tsx")
        out.push(
          "/" +
            path
              .relative(root, dir)
              .split(path.sep)
              .filter((s) => !/^\(.+\)$/.test(s))
              .join("/"),
        );
    }
  };
  walk(root);
  return out.map((p) => (p === "/" ? p : p.replace(/\/$/, ""))).sort();
}

function expectSecurityHeaders(res: Response, what: string) {
  const csp = res.headers.get("content-security-policy") ?? "";
  expect(csp, `${what}: CSP`).toMatch(/frame-ancestors 'none'/);
  expect(csp, `${what}: CSP`).toMatch(/default-src '(self|none)'/);
  expect(csp, `${what}: no eval`).not.toMatch(/unsafe-eval/);
  expect(res.headers.get("x-content-type-options"), what).toBe("nosniff");
  expect(res.headers.get("referrer-policy"), what).toBe("strict-origin-when-cross-origin");
  expect(res.headers.get("x-frame-options"), what).toBe("DENY");
  expect(res.headers.get("x-powered-by"), what).toBeNull();
  return csp;
}

describe("security headers", () => {
  it("are on every page, the worker and the manifest", async () => {
    const pages = pagesOnDisk();
    expect(pages).toContain("/check");
    for (const p of [...pages, "/manifest.webmanifest", "/serwist/sw.js", "/no-such-page"]) {
      const res = await fetch(app.url + p, { redirect: "manual" });
      expect(res.status, p).toBeLessThan(500);
      const csp = expectSecurityHeaders(res, p);
      expect(csp).toMatch(/object-src 'none'/);
      expect(csp).toMatch(/script-src 'self'/);
    }
  });

  it("are on every API route, answered or refused, with scripts shut out", async () => {
    const c = await signedIn(app, await makeUser("hdr"));
    const routes = routesOnDisk();
    expect(routes.length).toBeGreaterThan(40);
    for (const r of routes) {
      const [method, p] = r.split(" ");
      const url = p!.replace(/:nextauth/, "session").replace(/:\w+/g, crypto.randomUUID());
      const res = await c.raw(
        method!,
        url,
        method === "GET" || method === "DELETE" ? {} : { body: "{}", headers: { "content-type": "application/json" } },
      );
      const csp = expectSecurityHeaders(res, r);
      if (!p!.startsWith("/api/auth")) expect(csp, r).toMatch(/default-src 'none'.*sandbox/);
    }
  });
});

describe("sessions and passwords", () => {
  it("session cookies are HttpOnly and SameSite, never readable by scripts", async () => {
    const u = await makeUser("cookie");
    const c = new Client(app.url);
    const csrf = await c.raw("GET", "/api/auth/csrf");
    for (const sc of csrf.headers.getSetCookie()) expect(sc).toMatch(/HttpOnly/i);
    const token = (JSON.parse(await csrf.text()) as { csrfToken: string }).csrfToken;
    const res = await c.postSignIn("password", { email: u.email, password: u.password }, token);
    const session = res.headers.getSetCookie().find((s) => s.includes("session-token="));
    expect(session).toBeDefined();
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(session).toMatch(/Path=\//);
  });

  it("behind HTTPS the cookies are Secure (and __Secure- named), and still sign the user in", async () => {
    const secure = await startApp({ NEXTAUTH_URL: "https://lashwright.example" });
    try {
      const u = await makeUser("https");
      const c = new Client(secure.url);
      const csrf = await c.raw("GET", "/api/auth/csrf");
      for (const sc of csrf.headers.getSetCookie()) expect(sc).toMatch(/; Secure/i);
      const token = (JSON.parse(await csrf.text()) as { csrfToken: string }).csrfToken;
      const res = await c.postSignIn("password", { email: u.email, password: u.password }, token);
      const session = res.headers.getSetCookie().find((s) => s.startsWith("__Secure-next-auth.session-token="));
      expect(session).toMatch(/; Secure/i);
      expect(session).toMatch(/HttpOnly/i);
      expect((await c.get("/api/account")).status).toBe(200);
    } finally {
      await secure.stop();
    }
  });

  it("passwords: 8 to 128 characters, common ones refused, stored as Argon2id (m=19456 KiB, t=2, p=1)", async () => {
    const c = new Client(app.url);
    const tryPw = async (password: string) =>
      (
        await c.post("/api/account/sign-up", {
          email: `pw-${crypto.randomUUID().slice(0, 8)}@test.example`,
          name: "Pw Test",
          password,
        })
      ).status;
    expect(await tryPw("seven77")).toBe(422);
    expect(await tryPw("eight888")).toBe(202);
    expect(await tryPw("x".repeat(64))).toBe(202);
    expect(await tryPw("y".repeat(128))).toBe(202);
    expect(await tryPw("z".repeat(129))).toBe(422);
    // from published lists of the most common passwords (NIST SP 800-63B asks for such a check)
    for (const common of ["password123", "12345678", "qwertyuiop", "Iloveyou"])
      expect(await tryPw(common), common).toBe(422);
    const email = `cost-${crypto.randomUUID().slice(0, 8)}@test.example`;
    expect((await c.post("/api/account/sign-up", { email, name: "Cost", password: "a-fine-password" })).status).toBe(
      202,
    );
    const db = await rawConnection();
    const [rows] = await db.query("SELECT password_hash FROM users WHERE email = ?", [email]);
    await db.end();
    // OWASP Password Storage Cheat Sheet: Argon2id, 19 MiB, 2 passes, 1 lane; a 16-byte salt and a 32-byte hash
    expect((rows as { password_hash: string }[])[0]!.password_hash).toMatch(
      /^\$argon2id\$v=19\$m=19456,t=2,p=1\$[A-Za-z0-9+/]{22}\$[A-Za-z0-9+/]{43}$/,
    );
  });

  it("no secret reaches a response or the server's log", async () => {
    const email = `sec-${crypto.randomUUID().slice(0, 8)}@test.example`;
    const password = "very-private-phrase-42";
    const c = new Client(app.url);
    await c.post("/api/account/sign-up", { email, name: "Secret Keeper", password });
    await c.post("/api/account/verify", { token: linkToken(await waitForMail(email, /Confirm/), "/verify"), password });
    expect(await c.signIn("password", { email, password })).toBeNull();
    await c.signIn("password", { email, password: "wrong-phrase-00" });
    const bodies = [
      await c.get("/api/account"),
      await c.get("/api/clubs"),
      await c.patch("/api/account", { name: "Secret Keeper" }),
    ].map((r) => JSON.stringify(r.json));
    const session = c.cookieHeader().match(/session-token=([^;]+)/)?.[1] ?? "";
    expect(session.length).toBeGreaterThan(20);
    const log = app.output();
    for (const text of [...bodies, log]) {
      expect(text).not.toContain(password);
      expect(text).not.toContain(FIXTURE_PASSWORD);
      expect(text).not.toContain(process.env.NEXTAUTH_SECRET ?? "unset-secret");
      expect(text).not.toContain(session);
      expect(text).not.toMatch(/\$2[aby]\$\d\d\$/);
    }
  });
});

describe("access by id through sync", () => {
  it("a stranger naming each of the owner's records in a push changes none of them", async () => {
    const [owner, mentor, stranger] = await makeUsers("id-owner", "id-mentor", "id-stranger");
    const o = await signedIn(app, owner);
    const s = await signedIn(app, stranger);
    const clubId = (await o.post("/api/clubs", { name: "Id Club" })).json.club.id as string;
    await addMembership(clubId, mentor.id, ["mentor"]);
    const engineId = (await o.post("/api/engines", ENGINE_FOUR)).json.engine.id as string;
    const checkId = (await o.post(`/api/engines/${engineId}/checks`, { odometer: 7 })).json.check.id as string;
    await o.put(`/api/checks/${checkId}/readings`, {
      readings: [{ valve: "I1.1", installedStamp: 2.6, feelerGo: 0.15, feelerNoGo: 0.18 }],
    });
    const trayId = (await o.post("/api/tray", { size: 2.6, count: 4 })).json.item.id as string;
    const shareId = (await o.post(`/api/checks/${checkId}/shares`, { clubId })).json.share.id as string;
    const snapshot = async () => {
      const db = await rawConnection();
      const out = [];
      for (const [sql, arg] of [
        ["SELECT * FROM engines WHERE id = ?", engineId],
        ["SELECT * FROM checks WHERE id = ?", checkId],
        ["SELECT * FROM readings WHERE check_id = ?", checkId],
        ["SELECT * FROM tray_items WHERE id = ?", trayId],
        ["SELECT * FROM comments WHERE check_id = ?", checkId],
        ["SELECT * FROM shares WHERE id = ?", shareId],
      ] as const)
        out.push(JSON.stringify((await db.query(sql, [arg]))[0]));
      await db.end();
      return out;
    };
    const before = await snapshot();
    const mutations = [
      { name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: "Taken" } },
      { name: "check.put/1", args: { id: checkId, engineId, odometer: 99 } },
      {
        name: "reading.put/1",
        args: { checkId, reading: { valve: "I1.1", installedStamp: 3.0, feelerGo: 0.3, feelerNoGo: 0.33 } },
      },
      { name: "tray.put/1", args: { id: trayId, size: 2.6, count: 0 } },
      { name: "comment.add/1", args: { id: crypto.randomUUID(), checkId, body: "hi" } },
      { name: "verdict.set/1", args: { shareId, verdict: "close-up" } },
      { name: "tray.delete/1", args: { id: trayId } },
      { name: "check.delete/1", args: { id: checkId } },
      { name: "engine.delete/1", args: { id: engineId } },
    ].map((m, i) => ({ id: i + 1, ...m }));
    const res = await s.post("/api/sync/push", { clientId: crypto.randomUUID(), mutations });
    expect(res.status).toBe(200);
    // every write is refused by name; a delete of what the caller does not own deletes nothing
    const refused = res.json.rejected.map((r: { name: string }) => r.name) as string[];
    for (const w of ["engine.put/1", "check.put/1", "reading.put/1", "tray.put/1", "comment.add/1", "verdict.set/1"])
      expect(refused).toContain(w);
    expect(await snapshot()).toEqual(before);
    // and a pull shows the stranger none of it
    const pulled = JSON.stringify((await s.post("/api/sync/pull", { cursor: null })).json);
    for (const id of [engineId, checkId, trayId, shareId]) expect(pulled).not.toContain(id);
  });
});

describe("database safety", () => {
  // SQL, markup, quotes, backslashes, emoji, right-to-left and combining marks, a NUL
  const HOSTILE = [
    "Robert'); DROP TABLE engines;--",
    "<script>alert('x')</script>",
    '" OR ""="',
    "back\\slash \\' \\\" %_",
    "🔧 Ducati 🏍️ 750SS",
    "\u202eevil\u202c مرحبا",
    "Zalgo Z̤͔ͧ̑̓",
    "nul\u0000byte",
    "`${1+1}` {{7*7}}",
  ];

  it("a hostile string in every text field comes back exactly as it went in", async () => {
    const owner = await makeUser("hostile");
    const mentor = await makeUser("hostile-mentor");
    const o = await signedIn(app, owner);
    const m = await signedIn(app, mentor);
    for (const raw of HOSTILE) {
      // names are one-line labels: a control character or a direction override in one is refused
      // with 422 and changes nothing (lib/schemas/label.ts); free text (notes, comments) keeps it
      const s = raw;
      const name = LABEL_FORBIDDEN.test(raw) ? raw.replace(new RegExp(LABEL_FORBIDDEN, "gu"), "") : raw;
      if (name !== raw) {
        const before = (await o.get("/api/account")).json.user.name;
        expect((await o.patch("/api/account", { name: raw })).status).toBe(422);
        expect((await o.post("/api/engines", { ...ENGINE_FOUR, name: raw })).status).toBe(422);
        expect((await o.post("/api/clubs", { name: raw })).status).toBe(422);
        expect((await o.get("/api/account")).json.user.name).toBe(before);
      }
      expect((await o.patch("/api/account", { name })).json.user.name).toBe(name);
      expect((await o.get("/api/account")).json.user.name).toBe(name);
      const engine = (await o.post("/api/engines", { ...ENGINE_FOUR, name })).json.engine;
      expect(engine.name).toBe(name);
      expect((await o.get(`/api/engines/${engine.id}`)).json.engine.name).toBe(name);
      const check = (await o.post(`/api/engines/${engine.id}/checks`, { odometer: 10, notes: s })).json.check;
      expect((await o.get(`/api/checks/${check.id}`)).json.check.notes).toBe(s);
      const club = (await o.post("/api/clubs", { name })).json.club;
      expect((await o.get(`/api/clubs/${club.id}`)).json.club.name).toBe(name);
      await addMembership(club.id, mentor.id, ["mentor"]);
      await o.post(`/api/checks/${check.id}/shares`, { clubId: club.id });
      await m.post(`/api/checks/${check.id}/comments`, { body: s, valve: "I1.1" });
      const thread = (await o.get(`/api/checks/${check.id}/comments`)).json.items as {
        body: string;
        authorName: string;
      }[];
      expect(thread.map((t) => t.body)).toEqual([s]);
      // and through the sync route, as the phone sends them
      const id = crypto.randomUUID();
      const push = await o.post("/api/sync/push", {
        clientId: crypto.randomUUID(),
        mutations: [
          { id: 1, name: "engine.put/1", args: { ...ENGINE_FOUR, id, name } },
          { id: 2, name: "comment.add/1", args: { id: crypto.randomUUID(), checkId: check.id, body: s } },
        ],
      });
      expect(push.json.rejected).toEqual([]);
      expect((await o.get(`/api/engines/${id}`)).json.engine.name).toBe(name);
      const pulled = (await o.post("/api/sync/pull", { cursor: null })).json as {
        engines: { id: string; name: string }[];
        comments: { body: string }[];
      };
      expect(pulled.engines.find((e) => e.id === id)?.name).toBe(name);
      expect(pulled.comments.filter((c) => c.body === s)).toHaveLength(2);
    }
    // and the tables are all still there
    const db = await rawConnection();
    const [t] = await db.query("SELECT COUNT(*) AS n FROM engines");
    await db.end();
    expect(Number((t as { n: number }[])[0]!.n)).toBeGreaterThan(0);
  });
});
