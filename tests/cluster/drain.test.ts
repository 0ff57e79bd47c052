import http from "node:http";
import net from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Haproxy } from "../../scripts/lib/haproxy.mjs";
import { clusterSpec } from "../support/cluster";
import { ENGINE_FOUR, makeUser } from "../support/fixtures";
import { behindHaproxy } from "../support/haproxy";
import { sessionCookie, sleep } from "../support/load";
import type { App } from "../support/server";

/**
 * An instance told to stop (SIGTERM, as a supervisor or a deployment does) behind HAProxy, while a
 * stream of phones' requests goes through HAProxy (server/drain.ts): its /api/health/ready answers
 * 503 at once and HAProxy takes it out by its own check before it closes; a request it holds when it
 * closes gets its whole answer; a request arriving on a connection still open after the close gets
 * 503 with Retry-After; it exits by itself (143, Next's code for SIGTERM). Every request of the
 * stream gets a whole answer: no cut connection. Then again with a request that never finishes (its
 * body never comes): the process exits at SHUTDOWN_TIMEOUT_MS with code 1, whatever it holds.
 *
 * Both instances use the Galera cluster's nodes directly (the database path is not what is tested).
 */
const spec = clusterSpec();
const BOUND_MS = 10_000;
let proxy: Haproxy;
let apps: App[] = [];
let cookie = "";

beforeAll(async () => {
  ({ proxy, apps } = await behindHaproxy({
    spec,
    name: "haproxy-drain",
    env: {
      DB_POOL_SIZE: "5",
      SYNC_WRITES_PER_MINUTE: "10000000",
      // as in production behind this HAProxy (startApp's default is 0: no balancer)
      SHUTDOWN_NOTICE_MS: "2500",
      SHUTDOWN_TIMEOUT_MS: String(BOUND_MS),
      // the shutdown's steps are info lines (npm test's default is warn)
      LOG_LEVEL: "info",
    },
  }));
  const user = await makeUser("cluster-drain");
  cookie = await sessionCookie(user.id, process.env.NEXTAUTH_SECRET!);
}, 180_000);

afterAll(async () => {
  await Promise.all(apps.map((a) => a.stop()));
  await proxy?.stop();
});

/**
 * Phones' requests through HAProxy, `workers` at a time, until stopped: the liveness GET, a pull and
 * a push (a new mutation id each time). Each outcome is counted: "200", "503 with Retry-After",
 * another status, or "cut: <error>" when the connection gave no whole answer.
 */
function stream(workers: number) {
  let running = true;
  const outcomes = new Map<string, number>();
  const count = (k: string) => outcomes.set(k, (outcomes.get(k) ?? 0) + 1);
  const done = Promise.all(
    Array.from({ length: workers }, async (_, w) => {
      const clientId = crypto.randomUUID();
      const engineId = crypto.randomUUID();
      for (let i = 1; running; i++) {
        const headers = { "content-type": "application/json", cookie, origin: proxy.url };
        const req =
          i % 3 === 0
            ? { path: "/api/health/live", init: { method: "GET" } }
            : i % 3 === 1
              ? { path: "/api/sync/pull", init: { method: "POST", headers, body: JSON.stringify({ cursor: null }) } }
              : {
                  path: "/api/sync/push",
                  init: {
                    method: "POST",
                    headers,
                    body: JSON.stringify({
                      clientId,
                      mutations: [
                        { id: i, name: "engine.put/1", args: { ...ENGINE_FOUR, id: engineId, name: `W${w}` } },
                      ],
                    }),
                  },
                };
        try {
          const res = await fetch(proxy.url + req.path, { ...req.init, signal: AbortSignal.timeout(30_000) });
          await res.text(); // the whole body, or a throw when the connection is cut half-way
          count(
            res.status === 200
              ? "200"
              : res.status === 503 && res.headers.get("retry-after")
                ? "503 with Retry-After"
                : `${res.status} ${req.path}`,
          );
        } catch (e) {
          count(`cut: ${req.path} ${(e as Error).message} ${String((e as Error).cause ?? "")}`);
        }
        await sleep(20);
      }
    }),
  );
  return {
    outcomes,
    stop: async () => {
      running = false;
      await done;
      return outcomes;
    },
  };
}

/** A raw connection to an instance, to hold a request half-sent; `answer` is all it received when it closed. */
async function rawConnection(port: number) {
  const socket = net.connect(port, "127.0.0.1");
  let data = "";
  socket.on("data", (d) => (data += d));
  socket.on("error", () => {});
  const answer = new Promise<string>((r) => socket.once("close", () => r(data)));
  await new Promise((r) => socket.once("connect", r));
  return { write: (s: string) => socket.write(s), answer, destroy: () => socket.destroy() };
}

async function until(what: string, test: () => boolean | Promise<boolean>, timeoutMs = 30_000) {
  const t0 = performance.now();
  while (!(await test())) {
    if (performance.now() - t0 > timeoutMs) throw new Error(`${what}: not within ${timeoutMs / 1000} s`);
    await sleep(50);
  }
  return performance.now();
}

/** A signed-in phone's pull, whose handler waits for the body (a request without a session is answered at once). */
const heldHead = (length: number) =>
  `POST /api/sync/pull HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\nCookie: ${cookie}\r\nOrigin: ${proxy.url}\r\nContent-Length: ${length}\r\n\r\n`;

const logged = (a: App, msg: string) => a.output().includes(`"msg":"${msg}`);

/**
 * One readiness question on a connection of its own, as HAProxy's check asks it: fetch would reuse a
 * kept-alive connection, and a request on an open connection after the instance has closed is
 * answered by the drain's refusal (503, the phone's "busy" body), not by the ready check. Null when
 * the instance no longer takes connections.
 */
const readyOnce = (url: string) =>
  new Promise<{ status: number; failed?: string[]; body: string } | null>((resolve) => {
    const req = http.get(`${url}/api/health/ready`, { agent: false, timeout: 5000 }, (res) => {
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (d: string) => (body += d));
      res.on("end", () => {
        let failed: string[] | undefined;
        try {
          failed = (JSON.parse(body) as { failed?: string[] }).failed;
        } catch {
          /* not JSON: kept as the body, for the failure message */
        }
        resolve({ status: res.statusCode ?? 0, failed, body: body.slice(0, 200) });
      });
      res.on("error", () => resolve(null));
    });
    req.on("timeout", () => req.destroy());
    req.on("error", () => resolve(null));
  });

describe("an instance told to stop, behind HAProxy, during a stream of requests", () => {
  it("is taken out by its ready check before it closes, finishes what it holds, refuses the rest with 503, and exits", async () => {
    const [app1] = apps as [App, App];
    const s = stream(6);
    await sleep(2000);
    // held by instance 1 when it closes: the headers sent, the body not yet
    const body = JSON.stringify({ cursor: null });
    const held = await rawConnection(app1.port);
    held.write(`${heldHead(body.length)}${body.slice(0, 5)}`);
    // a connection already open whose next request is still arriving when instance 1 closes
    const late = await rawConnection(app1.port);
    late.write("GET /api/health/live HTTP/1.1\r\nHost: 127.0.0.1\r\n");

    const exit = app1.exited();
    let exitedAt = Infinity;
    void exit.then(() => (exitedAt = performance.now()));
    const readySeen: { status: number; failed?: string[]; body: string }[] = [];
    const t0 = performance.now();
    process.kill(app1.pid(), "SIGTERM");
    // HAProxy's view and instance 1's own steps, watched at the same time
    const downAt = until("HAProxy takes app1 out", async () => /^DOWN/.test((await proxy.servers())["app/app1"] ?? ""));
    const closedAt = until("instance 1 closes", () => logged(app1, "shutdown: closed to new connections"));
    await until("instance 1 has the signal", () => logged(app1, "shutdown: not ready from now"));

    // ready from instance 1 itself, asked directly, until it no longer answers
    const readyWatch = (async () => {
      while (exitedAt === Infinity) {
        const r = await readyOnce(app1.url);
        if (!r) break;
        readySeen.push(r);
        await sleep(100);
      }
    })();

    const closed = await closedAt;
    // the late request completes now: answered 503 with Retry-After, the connection closed
    late.write("\r\n");
    const lateAnswer = await late.answer;
    // the held request completes now: its whole answer, the connection closed after it
    held.write(body.slice(5));
    const heldAnswer = await held.answer;
    const down = await downAt;
    const { code, signal } = await exit;
    await readyWatch;
    await sleep(1000); // the stream goes on through instance 2 alone
    const outcomes = await s.stop();

    console.log(
      `[drain] SIGTERM → HAProxy took instance 1 out after ${Math.round(down - t0)} ms, it closed after ${Math.round(closed - t0)} ms, exited (${code ?? signal}) after ${Math.round(exitedAt - t0)} ms; stream: ${JSON.stringify(Object.fromEntries(outcomes))}`,
    );

    // ready said 503 ("stopping") from the start, and HAProxy took the instance out before it closed
    expect(readySeen.length).toBeGreaterThan(0);
    expect(readySeen.filter((r) => !(r.status === 503 && r.failed?.includes("stopping")))).toEqual([]);
    expect(down).toBeLessThan(closed);
    expect(closed).toBeLessThan(exitedAt);
    // the held pull: one whole answer, the connection closed after it
    expect(heldAnswer).toMatch(/^HTTP\/1\.1 200 /);
    expect(heldAnswer).toMatch(/\r\nconnection: close\r\n/i);
    expect(heldAnswer).toMatch(/"cursor":/);
    // the late one: 503 with Retry-After, and the phone's "busy" body
    expect(lateAnswer).toMatch(/^HTTP\/1\.1 503 /);
    expect(lateAnswer).toMatch(/\r\nretry-after: 1\r\n/i);
    expect(lateAnswer).toMatch(/\r\nconnection: close\r\n/i);
    expect(lateAnswer).toMatch(/"code":"overloaded"/);
    // exited by itself once nothing was in flight, with Next's code for SIGTERM
    expect({ code, signal }).toEqual({ code: 143, signal: null });
    expect(logged(app1, "shutdown: every request answered; exiting")).toBe(true);
    // every request of the stream got a whole answer: success, or 503 with Retry-After
    expect([...outcomes.keys()].filter((k) => k !== "200" && k !== "503 with Retry-After")).toEqual([]);
    expect(outcomes.get("200")).toBeGreaterThan(0);
  }, 120_000);

  it("exits at the bound (code 1) when a request it holds never finishes", async () => {
    const [app1] = apps as [App, App];
    await app1.restart();
    await proxy.waitUp(["app/app1"]);
    const held = await rawConnection(app1.port);
    // a body that never comes
    held.write(`${heldHead(100)}{`);
    await sleep(300);
    const exit = app1.exited();
    const t0 = performance.now();
    process.kill(app1.pid(), "SIGTERM");
    const { code, signal } = await exit;
    console.log(
      `[drain] with a request that never finishes: exited (${code ?? signal}) after ${Math.round(performance.now() - t0)} ms (bound ${BOUND_MS} ms)`,
    );
    held.destroy();
    expect({ code, signal }).toEqual({ code: 1, signal: null });
    expect(logged(app1, "shutdown: the bound is reached, exiting with requests unfinished")).toBe(true);
  }, 120_000);
});
