import "server-only";
import { createHash } from "node:crypto";
import { RateLimiterMemory, RateLimiterMySQL, RateLimiterRes } from "rate-limiter-flexible";
import { env } from "@/lib/env";
import { connectionPool } from "@/db/connection";
import { countBudgetRefusal } from "./metrics";

/**
 * Fair use: every costly action has a budget per caller (account, device, network address) and per
 * recipient. rate-limiter-flexible does the counting (atomic upsert in MariaDB, so every app instance
 * and a restart see the same counts); its in-memory block answers a key that is already spent without
 * a database round trip, which is what keeps an attack in progress cheap. If the database cannot be
 * reached, an in-memory limiter of the same size stands in (per instance), so a budget never fails open
 * and never turns a database hiccup into a refusal of everything.
 */
export type BudgetSpec = {
  /** what is counted, e.g. "push:account": the key prefix in the table */
  name: string;
  /** how many units the window allows */
  points: number;
  /** the window in seconds */
  seconds: number;
};

export type Spent = { ok: true; left: number } | { ok: false; retryAfterSeconds: number };

export type Budget = {
  spec: BudgetSpec;
  /** Spend `cost` units of `key`'s budget; refused, with the wait, when too few remain. */
  take(key: string, cost?: number): Promise<Spent>;
  /** Give units back (work that turned out not to happen, or a success that forgives earlier tries). */
  refund(key: string, cost?: number): Promise<void>;
  /** Forget the key's count altogether. */
  reset(key: string): Promise<void>;
};

function databaseName(): string {
  return decodeURIComponent(new URL(env().DATABASE_URL).pathname.replace(/^\//, ""));
}

const made = new Map<string, Budget>();

/** rate_limits.key is 255 characters and holds the name too: a long key (an e-mail address may be 254) is counted by its hash. */
const short = (key: string) => (key.length <= 160 ? key : `#${createHash("sha256").update(key).digest("base64url")}`);

export function budget(spec: BudgetSpec): Budget {
  const existing = made.get(spec.name);
  if (existing) return existing;
  let limiter: RateLimiterMySQL | null = null;
  // Made on first use: env() and the pool are not read while Next collects pages at build time.
  const get = () =>
    (limiter ??= new RateLimiterMySQL({
      // the callback pool under mysql2/promise, with the bounded acquire of db/connection.ts
      storeClient: connectionPool().pool,
      storeType: "pool",
      dbName: databaseName(),
      tableName: "rate_limits",
      tableCreated: true,
      clearExpiredByTimeout: false,
      keyPrefix: spec.name,
      points: spec.points,
      duration: spec.seconds,
      // blocked in memory once a take is refused (consumed beyond points), not at the last unit allowed:
      // a refund (a success, work that did not happen) does not lift a block, so none may be set
      // while the count is still within the budget
      inMemoryBlockOnConsumed: spec.points + 1,
      insuranceLimiter: new RateLimiterMemory({ keyPrefix: spec.name, points: spec.points, duration: spec.seconds }),
    }));
  const b: Budget = {
    spec,
    async take(key, cost = 1) {
      try {
        const r = await get().consume(short(key), cost);
        return { ok: true, left: r.remainingPoints };
      } catch (e) {
        if (e instanceof RateLimiterRes) {
          // a refused try stays counted (the window does not restart), so hammering a spent key gains nothing
          countBudgetRefusal(spec.name);
          return { ok: false, retryAfterSeconds: Math.max(1, Math.ceil(e.msBeforeNext / 1000)) };
        }
        throw e;
      }
    },
    async refund(key, cost = 1) {
      await get().reward(short(key), cost);
    },
    async reset(key) {
      await get().delete(short(key));
    },
  };
  made.set(spec.name, b);
  return b;
}
