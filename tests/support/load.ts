import { encode } from "next-auth/jwt";
import { retryAfterMs, retryDelay } from "@/lib/sync/transport";

/**
 * Simulated phones for the load test: each keeps its own outbox with increasing mutation ids and a
 * pull cursor, as the real client does (lib/sync/phone-sync.ts), but without IndexedDB, so a few
 * hundred of them cost the machine little beside the server they load. A busy answer (503 with
 * Retry-After, or 429 with Retry-After: this phone's budget) is waited out with the phone's own
 * back-off and jitter and the same outbox is sent again; so is a cut connection (no answer, or an
 * answer cut off half-way by an instance that died), which the real phone calls Offline
 * (lib/sync/transport.ts) and sends again later, outbox kept. Every request has a 30 s bound.
 */
/** What a phone met on its way, other than success, that it waited out and sent again (Stats.count). */
export const RETRIED = {
  busy: "503 busy (retried)",
  limited: "429 with Retry-After (retried)",
  cut: "connection cut (retried)",
} as const;
/** True for a count that is one of the retried kinds above: every other count is a failure. */
export const retried = (counted: string) => Object.values(RETRIED).some((r) => counted.includes(`: ${r} ×`));

// The margin: the server answers by its own bounds, success or 503, well before this. Its longest
// waits are a database connection (DB_ACQUIRE_TIMEOUT_MS, 5 s), one lock wait (DB_LOCK_WAIT_SECONDS,
// 10 s) and, for a sign-in, a place in the hashing queue (HASH_WAIT_MS, 10 s, server/password.ts):
// at most 15 s of waiting, plus the request's own work (the slowest answer of a recorded 100-phone
// burst on this 2-core machine took 3.1 s, waits included). 30 s is about twice the worst sum: a
// request still unanswered then is stuck, not slow.
export const ANSWER_WITHIN_MS = 30_000;

/** After this moment (performance.now()) a phone stops retrying, so a server that never answers ends the run. */
export const giveUp = { at: Infinity };

export interface Mutation {
  id: number;
  name: string;
  args: unknown;
}

/** Latencies and failures, per kind of request or sync. */
export class Stats {
  private samples = new Map<string, number[]>();
  private counts = new Map<string, Record<string, number>>();
  /** when (performance.now()) each request got no answer or only part of one: the phone sent it again */
  readonly unanswered: number[] = [];
  note(kind: string, ms: number) {
    const list = this.samples.get(kind) ?? [];
    list.push(ms);
    this.samples.set(kind, list);
  }
  count(kind: string, what: string) {
    const c = this.counts.get(kind) ?? {};
    c[what] = (c[what] ?? 0) + 1;
    this.counts.set(kind, c);
  }
  get(kind: string, what: string) {
    return this.counts.get(kind)?.[what] ?? 0;
  }
  total(what: string) {
    return [...this.counts.values()].reduce((n, c) => n + (c[what] ?? 0), 0);
  }
  /** "kind: what × n" for everything counted */
  counted() {
    return [...this.counts].flatMap(([kind, c]) => Object.entries(c).map(([what, n]) => `${kind}: ${what} × ${n}`));
  }
  summary(kind: string) {
    const s = [...(this.samples.get(kind) ?? [])].sort((a, b) => a - b);
    const at = (p: number) => (s.length ? s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)]! : NaN);
    return { n: s.length, p50: at(50), p95: at(95), max: s.length ? s[s.length - 1]! : NaN };
  }
}

/** A signed session cookie, as the phone holds after signing in on an earlier day. */
export async function sessionCookie(userId: string, secret: string) {
  const token = await encode({ token: { uid: userId, gen: 0, sub: userId }, secret, maxAge: 30 * 86_400 });
  return `next-auth.session-token=${token}`;
}

export type PhoneKind = "mechanic" | "mentor" | "member";

export class Phone {
  outbox: Mutation[] = [];
  cursor: number | null = null;
  private nextId = 1;
  /** every mutation the server acknowledged, with the reason when it refused it */
  acknowledged = new Map<number, { name: string; rejected?: string }>();
  constructor(
    readonly kind: PhoneKind,
    readonly base: string,
    public cookie: string,
    readonly clientId: string,
    readonly stats: Stats,
  ) {}

  queue(name: string, args: unknown): number {
    const id = this.nextId++;
    this.outbox.push({ id, name, args });
    return id;
  }

  /** One request, retried after busy answers and failures until answered 2xx; latency per try. */
  private async post<T>(kind: string, path: string, body: () => unknown): Promise<T> {
    for (let attempt = 0; ; attempt++) {
      if (performance.now() > giveUp.at) {
        this.stats.count(kind, "gave up");
        throw new Error(`${path}: no answer before the run's deadline`);
      }
      const t0 = performance.now();
      let res: Response;
      let text: string;
      try {
        res = await fetch(this.base + path, {
          method: "POST",
          // a phone's browser names the app's origin on every push (state-changing routes require it)
          headers: { "content-type": "application/json", cookie: this.cookie, origin: this.base },
          body: JSON.stringify(body()),
          signal: AbortSignal.timeout(ANSWER_WITHIN_MS),
        });
        // inside the try: the connection may be cut half-way through the body ("terminated")
        text = await res.text();
      } catch (e) {
        // no answer, or one cut off: Offline to the real phone, which keeps its outbox and sends again
        this.stats.unanswered.push(performance.now());
        this.stats.count(kind, (e as Error).name === "TimeoutError" ? "unanswered in 30 s" : RETRIED.cut);
        await sleep(retryDelay(attempt, null));
        continue;
      }
      this.stats.note(kind, performance.now() - t0);
      if (res.ok) return JSON.parse(text) as T;
      if ((res.status === 503 || res.status === 429) && res.headers.get("retry-after")) {
        this.stats.count(kind, res.status === 503 ? RETRIED.busy : RETRIED.limited);
        await sleep(retryDelay(attempt, retryAfterMs(res.headers.get("retry-after"))));
        continue;
      }
      this.stats.count(kind, `${res.status}${res.status >= 500 ? " (server error)" : ""}`);
      if (res.status < 500) throw new Error(`${path} answered ${res.status}: ${text.slice(0, 300)}`);
      await sleep(retryDelay(attempt, null));
    }
  }

  /** Push the whole outbox, then pull: the phone's sync. Returns its duration in ms. */
  async sync(label: string): Promise<number> {
    const t0 = performance.now();
    while (this.outbox.length) {
      const batch = this.outbox.slice(0, 200);
      const r = await this.post<{ lastMutationId: number; rejected: { id: number; reason: string }[] }>(
        `push (${label})`,
        "/api/sync/push",
        () => ({ clientId: this.clientId, mutations: batch }),
      );
      const rejected = new Map(r.rejected.map((x) => [x.id, x.reason]));
      for (const m of this.outbox.filter((m) => m.id <= r.lastMutationId))
        this.acknowledged.set(m.id, { name: m.name, rejected: rejected.get(m.id) });
      this.outbox = this.outbox.filter((m) => m.id > r.lastMutationId);
    }
    const p = await this.post<{ cursor: number }>(`pull (${label})`, "/api/sync/pull", () => ({ cursor: this.cursor }));
    this.cursor = p.cursor;
    const ms = performance.now() - t0;
    this.stats.note(`whole sync (${label})`, ms);
    return ms;
  }
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** The figures as a table: one line per kind, the direct database work beside the HTTP one. */
export function table(
  rows: { kind: string; http: ReturnType<Stats["summary"]>; direct?: ReturnType<Stats["summary"]>; notes?: string }[],
) {
  const f = (v: number) => (Number.isNaN(v) ? "-" : `${Math.round(v)}`);
  const lines = [
    `${"kind".padEnd(30)} ${"n".padStart(6)} ${"p50 ms".padStart(8)} ${"p95 ms".padStart(8)} ${"max ms".padStart(8)} | ${"direct p50".padStart(10)} ${"p95".padStart(6)} ${"max".padStart(6)}  notes`,
  ];
  for (const r of rows)
    lines.push(
      `${r.kind.padEnd(30)} ${String(r.http.n).padStart(6)} ${f(r.http.p50).padStart(8)} ${f(r.http.p95).padStart(8)} ${f(r.http.max).padStart(8)} | ${(r.direct ? f(r.direct.p50) : "").padStart(10)} ${(r.direct ? f(r.direct.p95) : "").padStart(6)} ${(r.direct ? f(r.direct.max) : "").padStart(6)}  ${r.notes ?? ""}`,
    );
  return lines.join("\n");
}
