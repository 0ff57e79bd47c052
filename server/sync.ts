import "server-only";
import { LashInputError } from "@/lib/lash";
import { domainErrorOf } from "@/lib/errors";
import { CURSOR_PREFIX, parseMutation, type Cursor, type MutationArgs, type MutationName, type PushInput } from "@/lib/sync/mutations";
import { transaction } from "@/db/client";
import { nextVersion, type Tx } from "@/db/versions";
import { isTransientDbError } from "@/db/errors";
import { retryConflicts } from "@/db/retry";
import * as q from "@/db/queries/sync";
import { apply, applyReadings } from "./appliers";
import { runAfter, type After, type WriteCtx } from "./write";
import type { SessionUser } from "./auth";

/**
 * The server side of the sync protocol (DESIGN.md section 6). A push is applied in one transaction:
 * mutations at or below the client's last applied id are skipped (replays are harmless), each new
 * one runs through its applier (server/appliers.ts) in its own savepoint so a refused one rolls
 * back alone and is recorded with its reason, runs of readings of one check go in as one multi-row
 * upsert, and the new last id is written in the same transaction.
 */
export interface PushResult {
  lastMutationId: number;
  rejected: { id: number; name: string; reason: string }[];
}

type Parsed = { id: number; name: string; args: unknown; reason?: string };

/**
 * Why a mutation is refused, for the phone. A failure of the moment (the server saturated, a lock
 * waited too long) is not a refusal: it fails the whole push, nothing is recorded, and the phone
 * sends the same outbox again later.
 */
function reasonOf(e: unknown): string {
  const d = domainErrorOf(e);
  if (d?.kind === "overloaded" || (!d && isTransientDbError(e))) throw e;
  if (d) return d.message;
  if (e instanceof LashInputError) return e.message;
  console.error("[sync] a change could not be applied:", e instanceof Error ? e.message : e);
  return "the server could not apply this change";
}

/** Run one step in a savepoint; its post-commit work is kept only if the step succeeds. */
async function step(tx: Tx, user: SessionUser, version: number, after: After[], fn: (w: WriteCtx) => Promise<void>) {
  const mine: After[] = [];
  await tx.transaction((sp) => fn({ tx: sp, user, version, later: (f) => mine.push(f) }));
  after.push(...mine);
}

const readingArgs = (m: Parsed) => m.args as MutationArgs<"reading.put/1">;

export async function push(user: SessionUser, input: PushInput): Promise<PushResult> {
  let rejected: PushResult["rejected"] = [];
  let after: After[] = [];
  // a push that lost a write conflict (another device's push, another node) runs again from the
  // start, its client row read afresh, so what the winner applied is skipped (db/retry.ts)
  const lastMutationId = await retryConflicts(() => transaction(async (tx) => {
    rejected = [];
    after = [];
    const last = await q.lockClient(tx, input.clientId, user.id);
    const fresh: Parsed[] = input.mutations
      .filter((m) => m.id > last)
      .map((m) => {
        const p = parseMutation(m.name, m.args);
        return p.ok ? { id: m.id, name: p.name, args: p.args } : { id: m.id, name: m.name, args: m.args, reason: p.reason };
      });
    if (fresh.length === 0) return last;
    const version = await nextVersion(tx, user.id);
    const reject = async (m: Parsed, reason: string) => {
      rejected.push({ id: m.id, name: m.name, reason });
      await q.recordRejected(tx, input.clientId, m.id, m.name, reason);
    };
    const one = (m: Parsed) => step(tx, user, version, after, (w) => apply(w, m.name as MutationName, m.args as never)).catch((e: unknown) => reject(m, reasonOf(e)));
    for (let i = 0; i < fresh.length; ) {
      const m = fresh[i]!;
      if (m.reason) {
        await reject(m, m.reason);
        i++;
        continue;
      }
      // a run of valid readings of one check, in order
      if (m.name === "reading.put/1") {
        const checkId = readingArgs(m).checkId;
        let j = i;
        while (j < fresh.length && fresh[j]!.name === "reading.put/1" && !fresh[j]!.reason && readingArgs(fresh[j]!).checkId === checkId) j++;
        const run = fresh.slice(i, j);
        if (run.length > 1) {
          const ok = await step(tx, user, version, after, (w) => applyReadings(w, checkId, run.map((r) => readingArgs(r).reading)))
            .then(() => true)
            .catch((e: unknown) => (reasonOf(e), false));
          if (ok) {
            i = j;
            continue;
          }
          // something in the run is refused: apply them one by one to find it
        }
        for (const r of run) await one(r);
        i = j;
        continue;
      }
      await one(m);
      i++;
    }
    const newLast = fresh[fresh.length - 1]!.id;
    await q.setLastMutation(tx, input.clientId, newLast);
    return newLast;
  }));
  // notices are queued only once the changes are committed; a failure here never fails the push
  await runAfter(after);
  return { lastMutationId, rejected };
}

/**
 * Everything of the user's that changed after the cursor, in one read-only transaction (one
 * connection, one snapshot). No cursor, or an old-style numeric one, gets a full pull.
 */
export async function pull(user: SessionUser, cursor: Cursor) {
  const after = typeof cursor === "string" ? Number(cursor.slice(CURSOR_PREFIX.length)) : null;
  const { upTo, ...changes } = await transaction((tx) => q.changesSince(tx, user.id, after), { isolationLevel: "repeatable read", accessMode: "read only" });
  return { cursor: `${CURSOR_PREFIX}${upTo}`, ...changes };
}
