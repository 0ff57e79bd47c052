import "server-only";
import { versioned, type Tx } from "@/db/versions";
import type { SessionUser } from "./auth";

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

/** Run post-commit work; a failure there never fails the write that has already committed. */
export async function runAfter(afters: After[]) {
  for (const then of afters) await then().catch((e: unknown) => console.error("[write] notice after commit failed:", e instanceof Error ? e.message : e));
}

/** A REST write: one versioned transaction that authorises and applies, then the notices. */
export async function write<T>(user: SessionUser, fn: (w: WriteCtx) => Promise<T>): Promise<T> {
  const afters: After[] = [];
  const out = await versioned(user.id, (tx, version) => fn({ tx, user, version, later: (f) => afters.push(f) }));
  await runAfter(afters);
  return out;
}
