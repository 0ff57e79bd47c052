import "server-only";
import { isWriteConflict } from "./errors";

/**
 * Run a whole transaction again when the database chose it as the loser of a conflict: a deadlock
 * on one node, or on a multi-primary cluster (Galera) a commit that failed certification because
 * another node committed a write to the same row first (db/errors.ts isWriteConflict), after
 * everything was rolled back. Run again, the transaction reads the winner's rows and decides
 * afresh. The retries are bounded and spread with random ("full") jitter so two losers do not
 * collide again in step; when they run out the error goes on and the request is answered 503
 * with Retry-After (server/http.ts), never 500. `fn` must start its transaction itself and keep
 * nothing from a failed attempt.
 */
export const CONFLICT_ATTEMPTS = 6;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function retryConflicts<T>(
  fn: (attempt: number) => Promise<T>,
  { attempts = CONFLICT_ATTEMPTS, baseMs = 10, capMs = 500 } = {},
): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await fn(attempt);
    } catch (e) {
      if (!isWriteConflict(e) || attempt >= attempts) throw e;
      await sleep(Math.random() * Math.min(capMs, baseMs * 2 ** attempt));
    }
  }
}
