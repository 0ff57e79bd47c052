import "server-only";
import { env } from "@/lib/env";
import { dueObjectDeletions, objectDeleted, objectDeleteFailed } from "@/db/queries/account-deletion";
import { deleteObject } from "./storage";

/**
 * The photo store's half of a deletion. The transaction that deletes a photo's row writes its key
 * to object_deletions; this sweep removes the objects and forgets each key only once the store has
 * confirmed it (deleting a missing object succeeds, so a repeat is harmless). A store that fails
 * keeps the key, tried again with a doubling wait (OBJECT_DELETE_RETRY_SECONDS, up to an hour), by
 * the timer of every instance (instrumentation.ts) until it is gone: a deleted account's photos do
 * not outlive it (OWASP ASVS 5.0 V14 Data Protection; GDPR article 17).
 */
export async function sweepObjectDeletions(batch = 100): Promise<number> {
  let removed = 0;
  for (;;) {
    const keys = await dueObjectDeletions(batch);
    if (keys.length === 0) return removed;
    for (const key of keys) {
      try {
        await deleteObject(key);
      } catch (e) {
        // the store is failing: this key waits longer, the rest of the batch waits for the next tick
        await objectDeleteFailed(key, e instanceof Error ? e.message : String(e), env().OBJECT_DELETE_RETRY_SECONDS);
        return removed;
      }
      await objectDeleted(key);
      removed++;
    }
  }
}

let running: Promise<number> | null = null;
/** Start a sweep unless one runs; never fails the caller (the timer tries again). */
export function kickObjectDeletions(): Promise<number> {
  running ??= sweepObjectDeletions()
    .catch((e: unknown) => {
      console.error("[object-deletions] sweep failed:", e instanceof Error ? e.message : e);
      return 0;
    })
    .finally(() => {
      running = null;
    });
  return running;
}
