import "server-only";
import { versioned, type Tx } from "@/db/versions";
import { retryConflicts } from "@/db/retry";
import { gatherNotices } from "./notices";
import type { SessionUser } from "./auth";
import { log } from "./log";

/**
 * The context every write runs in: the caller's transaction (the only way to the database inside
 * it), the signed-in user, the change version its rows carry, and later() for work that must wait
 * for the commit (e-mail notices), dropped when the write is refused or rolled back.
 */
export type After = () => Promise<void>;

export interface WriteCtx {
  tx: Tx;
  user: SessionUser;
  version: number;
  later(fn: After): void;
}

/**
 * Run post-commit work; a failure there never fails the write that has already committed. The
 * notices it makes are worked out together (one lookup, one insert, however many mutations).
 */
export async function runAfter(afters: After[]) {
  await gatherNotices(async () => {
    for (const then of afters)
      await then().catch((e: unknown) => log.error({ err: e }, "write: work after the commit failed"));
  });
}

/**
 * A REST write: one versioned transaction that authorises and applies, then the notices. A
 * transaction that lost a write conflict (db/retry.ts) runs again from the start.
 */
export async function write<T>(user: SessionUser, fn: (w: WriteCtx) => Promise<T>): Promise<T> {
  let afters: After[] = [];
  const out = await retryConflicts(() => {
    afters = [];
    return versioned(user.id, (tx, version) => fn({ tx, user, version, later: (f) => afters.push(f) }));
  });
  await runAfter(afters);
  return out;
}
