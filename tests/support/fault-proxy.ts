import http from "node:http";
import type { AddressInfo } from "node:net";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { uniformInt } from "pure-rand/distribution/uniformInt";

/**
 * A proxy on 127.0.0.1 between the sync client and the server that misbehaves the way a garage's
 * signal does, decided by a seeded generator so a failure can be replayed: it resets connections
 * before the server sees them, drops the answer after the server committed, sends a request twice,
 * replays one late (after newer ones: reordering), and delays others. Nothing here knows the
 * protocol; it only moves bytes.
 */
export type Fault = "pass" | "reset" | "drop-answer" | "duplicate" | "late-replay" | "delay" | "upstream-down";

export interface FaultProxy {
  url: string;
  counts: Record<Fault, number>;
  /** wait for late replays still in flight */
  settle(): Promise<void>;
  /** stop misbehaving (for the final clean pass) */
  calm(): void;
  close(): Promise<void>;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function startFaultProxy(target: string, seed: number): Promise<FaultProxy> {
  const rng = xoroshiro128plus(seed);
  const counts: Record<Fault, number> = {
    pass: 0,
    reset: 0,
    "drop-answer": 0,
    duplicate: 0,
    "late-replay": 0,
    delay: 0,
    "upstream-down": 0,
  };
  const late = new Set<Promise<unknown>>();
  let calm = false;

  const pick = (): Fault => {
    if (calm) return "pass";
    const r = uniformInt(rng, 0, 99);
    if (r < 8) return "reset";
    if (r < 20) return "drop-answer";
    if (r < 28) return "duplicate";
    if (r < 36) return "late-replay";
    if (r < 56) return "delay";
    return "pass";
  };

  const forward = async (method: string, path: string, headers: Record<string, string>, body: Buffer) => {
    const res = await fetch(target + path, {
      method,
      headers,
      // a server that never answers becomes a gateway error (below), as a real proxy's timeout would
      signal: AbortSignal.timeout(90_000),
      body: method === "GET" || method === "HEAD" ? undefined : new Uint8Array(body),
    });
    return {
      status: res.status,
      type: res.headers.get("content-type") ?? "application/json",
      body: Buffer.from(await res.arrayBuffer()),
    };
  };

  const server = http.createServer(async (req, res) => {
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    const body = Buffer.concat(chunks);
    const headers: Record<string, string> = {};
    for (const h of ["content-type", "cookie", "sec-fetch-site"])
      if (req.headers[h]) headers[h] = String(req.headers[h]);
    const fault = pick();
    const delayMs = fault === "delay" ? uniformInt(rng, 20, 400) : 0;
    const replayMs = fault === "late-replay" ? uniformInt(rng, 100, 1500) : 0;
    try {
      if (fault === "reset") {
        counts.reset++;
        req.socket.destroy();
        return;
      }
      if (delayMs) await sleep(delayMs);
      let answer = await forward(req.method!, req.url!, headers, body);
      if (fault === "duplicate") answer = await forward(req.method!, req.url!, headers, body);
      if (fault === "late-replay") {
        const p = sleep(replayMs)
          .then(() => forward(req.method!, req.url!, headers, body))
          .catch(() => undefined)
          .finally(() => late.delete(p));
        late.add(p);
      }
      if (fault === "drop-answer") {
        counts["drop-answer"]++;
        req.socket.destroy();
        return;
      }
      counts[fault]++;
      res.writeHead(answer.status, { "content-type": answer.type });
      res.end(answer.body);
    } catch {
      // the server is not there (restarting): a gateway error, as a real proxy would answer
      counts["upstream-down"]++;
      if (!res.headersSent) res.writeHead(502, { "content-type": "application/json" });
      res.end(JSON.stringify({ error: { code: "bad_gateway", message: "upstream unavailable" } }));
    }
  });
  await new Promise<void>((r) => server.listen(0, "127.0.0.1", r));
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}`,
    counts,
    settle: async () => {
      while (late.size) await Promise.all([...late]);
    },
    calm: () => {
      calm = true;
    },
    close: () => new Promise((r) => server.close(() => r())),
  };
}
