import "server-only";
import { LashInputError } from "@/lib/lash";
import { domainErrorOf, tooMany } from "@/lib/errors";
import { env } from "@/lib/env";
import {
  CURSOR_PREFIX,
  parseMutation,
  type Cursor,
  type MutationArgs,
  type MutationName,
  type PushInput,
} from "@/lib/sync/mutations";
import { transaction } from "@/db/connection";
import { nextVersion, type Tx } from "@/db/versions";
import { isTransientDbError } from "@/db/errors";
import { retryConflicts } from "@/db/retry";
import * as q from "@/db/queries/sync";
import { apply, applyReadingsAlone, applyRun } from "./appliers";
import { runAfter, type After, type WriteCtx } from "./write";
import { budget, type Budget } from "./budgets";
import type { SessionUser } from "./auth";
import { ownDevice } from "./access";
import { phase } from "./timing";
import { log } from "./log";
import { countSyncRows } from "./metrics";

/**
 * The write budget (DEVELOPERS.md "Fair use"; OWASP ASVS 5.0 V2 Validation and Business Logic,
 * anti-automation): mutations per minute, counted per account and per device, spent before the
 * push's transaction opens (a budget asks the pool for a connection, which a transaction must not).
 * Size: a 24-valve check measured wholly offline and synced at once is about 300 mutations
 * (24 valves x 2 rounds x up to 4 saves: stamp, go and no-go blades, a correction; 24 swaps x 3:
 * two tray moves and the fitted shim; a few statuses and comments; photos go by their own route and
 * do not count). So a device may push 600 a minute (twice that check) and an account 1,200 (two
 * phones doing so at the same minute); `SYNC_WRITES_PER_MINUTE` sets the account's figure. A
 * script that pushes 200 comments a request is refused from its fourth request in a minute.
 * Beyond it the push answers 429 with Retry-After and applies nothing of that request; the phone
 * keeps its outbox and comes back after the wait, so the owner is delayed, never locked out.
 * Replayed mutations (at or below the device's last applied id) cost nothing.
 */
let writeBudgets: { account: Budget; device: Budget } | undefined;
function writeBudget() {
  const perMinute = env().SYNC_WRITES_PER_MINUTE;
  return (writeBudgets ??= {
    account: budget({ name: "push:account", points: perMinute, seconds: 60 }),
    device: budget({ name: "push:device", points: Math.floor(perMinute / 2), seconds: 60 }),
  });
}

/**
 * A device's budget is counted under the account too: anyone may name any device id in a push, and
 * naming someone else's must not spend theirs (a limit never locks the rightful owner out).
 */
const deviceKey = (user: SessionUser, clientId: string) => `${user.id}:${clientId}`;

/** Spend `cost` of both budgets, or refuse the push (nothing spent of the one that said yes). */
async function spendWrites(user: SessionUser, clientId: string, cost: number) {
  const { account, device } = writeBudget();
  const d = await device.take(deviceKey(user, clientId), cost);
  const a = d.ok ? await account.take(user.id, cost) : null;
  if (d.ok && a?.ok) return;
  if (d.ok) await device.refund(deviceKey(user, clientId), cost);
  const wait = !d.ok ? d.retryAfterSeconds : a && !a.ok ? a.retryAfterSeconds : 60;
  throw tooMany(
    `Too many changes sent in the last minute: they are kept on this phone and sent again in ${wait} s`,
    wait,
  );
}

async function refundWrites(user: SessionUser, clientId: string, cost: number) {
  if (cost <= 0) return;
  const { account, device } = writeBudget();
  await Promise.all([device.refund(deviceKey(user, clientId), cost), account.refund(user.id, cost)]).catch(
    () => undefined,
  );
}

/**
 * The server side of the sync protocol (README "Working without a signal"). A push is applied in one transaction:
 * mutations at or below the client's last applied id are skipped (replays are harmless), each new
 * one runs through its applier (server/appliers.ts) as one step, a run of readings of one check is
 * one call of the table's run applier (applyRun: one multi-row upsert), a refused one is recorded
 * with its reason and rolls back alone, and the new last id is written in the same transaction.
 *
 * Most pushes refuse nothing, so the steps first run straight in the transaction. Only when one
 * fails is the transaction rolled back and run again with each step in a savepoint of its own,
 * so the refused one rolls back alone ("careful"): a savepoint and its release are two round trips
 * a step, which a push that refuses nothing no longer pays. Nothing is kept from the first attempt
 * (it is rolled back, like a transaction that lost a write conflict: db/retry.ts).
 */
export interface PushResult {
  lastMutationId: number;
  /** refused for good: the phone keeps each one, shows its reason, and the mechanic decides */
  rejected: { id: number; name: string; reason: string }[];
  /**
   * Not applied, to be sent again later under the same id: a name this server does not know yet
   * (a phone already on a newer build than this server during a deploy) or an unexpected failure
   * in the server's own code. Nothing after it was applied, so the queue keeps its order.
   */
  later?: { id: number; name: string; reason: string };
}

type Parsed = { id: number; name: string; args: unknown; reason?: string; unknown?: boolean };

/** A mutation not applied now that must be sent again later (see PushResult.later). */
class Later extends Error {}

/** A step failed in a push run without savepoints: it is run again, carefully (see push). */
class StepFailed extends Error {}

/** A failure of the moment (the server saturated, a lock waited too long): the whole push fails. */
function transient(e: unknown): boolean {
  const d = domainErrorOf(e);
  return d?.kind === "overloaded" || (!d && isTransientDbError(e));
}

/** An error that refuses the mutation for good, with its message as the reason (reasonOf). */
function isRefusal(e: unknown): boolean {
  const d = domainErrorOf(e);
  return d ? d.kind !== "overloaded" : e instanceof LashInputError;
}

/**
 * Why a mutation is refused, for the phone. A failure of the moment (the server saturated, a lock
 * waited too long) is not a refusal: it fails the whole push, nothing is recorded, and the phone
 * sends the same outbox again later. A failure in the server's own code is not the mechanic's
 * doing either: it is "later" (the fix ships, the change goes through), never a refusal.
 */
function reasonOf(e: unknown): string {
  if (transient(e)) throw e;
  const d = domainErrorOf(e);
  if (d) return d.message;
  if (e instanceof LashInputError) return e.message;
  log.error({ err: e }, "sync: a change could not be applied");
  throw new Later("the server could not apply this change yet");
}

/**
 * Run one step, in a savepoint when careful; its post-commit work is kept only if it succeeds.
 * Not careful, a failure that is not of the moment stops the attempt (StepFailed).
 */
async function step<T>(
  tx: Tx,
  user: SessionUser,
  version: number,
  after: After[],
  careful: boolean,
  fn: (w: WriteCtx) => Promise<T>,
): Promise<T> {
  const mine: After[] = [];
  const ctx = (t: Tx): WriteCtx => ({ tx: t, user, version, later: (f) => mine.push(f) });
  let out: T;
  if (careful) {
    out = await tx.transaction((sp) => {
      phase("savepoint");
      return fn(ctx(sp));
    });
    phase("savepoint release");
  } else {
    out = await fn(ctx(tx)).catch((e: unknown) => {
      throw transient(e) ? e : new StepFailed("a step failed", { cause: e });
    });
  }
  after.push(...mine);
  return out;
}

const readingArgs = (m: Parsed) => m.args as MutationArgs<"reading.put/1">;

export async function push(user: SessionUser, input: PushInput): Promise<PushResult> {
  let rejected: PushResult["rejected"] = [];
  let later: PushResult["later"];
  let after: After[] = [];
  // what this push would apply, as the device's row says now: only that is charged
  const known = await q.clientOwner(input.clientId);
  phase("device read");
  const charged = input.mutations.filter((m) => m.id > (known?.userId === user.id ? known.lastMutationId : 0)).length;
  if (charged > 0) await spendWrites(user, input.clientId, charged);
  phase("write budget");
  let applied = 0;
  const attempt = (careful: boolean) =>
    transaction(async (tx) => {
      rejected = [];
      later = undefined;
      after = [];
      applied = 0;
      const last = ownDevice(await q.lockClient(tx, input.clientId, user.id, known !== undefined), user);
      phase("device lock");
      // a push sent again because its answer was lost: what was refused then is said again, so the
      // phone never takes a refused change for an applied one and drops it
      rejected = await q.rejectedAmong(
        tx,
        input.clientId,
        input.mutations.filter((m) => m.id <= last).map((m) => m.id),
      );
      phase("replays");
      const fresh: Parsed[] = input.mutations
        .filter((m) => m.id > last)
        .map((m) => {
          const p = parseMutation(m.name, m.args);
          return p.ok
            ? { id: m.id, name: p.name, args: p.args }
            : { id: m.id, name: m.name, args: m.args, reason: p.reason, unknown: p.unknown };
        });
      applied = fresh.length;
      phase("validate");
      if (fresh.length === 0) return last;
      const version = await nextVersion(tx, user.id);
      phase("version");
      // this push's refusals, recorded together at the end
      const refusals: PushResult["rejected"] = [];
      const reject = (m: Parsed, reason: string) => {
        const r = { id: m.id, name: m.name, reason };
        rejected.push(r);
        refusals.push(r);
      };
      const one = (m: Parsed) =>
        step(tx, user, version, after, careful, (w) => apply(w, m.name as MutationName, m.args as never)).catch(
          (e: unknown) => {
            if (e instanceof StepFailed) throw e;
            // reasonOf decides before the savepoint's rollback is forgotten: Later stops the push below
            const reason = (() => {
              try {
                return reasonOf(e);
              } catch (x) {
                if (x instanceof Later) later = { id: m.id, name: m.name, reason: x.message };
                else throw x;
                return null;
              }
            })();
            if (reason !== null) reject(m, reason);
          },
        );
      // the id of the last mutation this push has dealt with (applied or refused for good)
      let done = last;
      for (let i = 0; i < fresh.length && !later;) {
        const m = fresh[i]!;
        // a name this server does not know may come from a newer app: kept for later, never refused
        if (m.unknown) {
          later = { id: m.id, name: m.name, reason: m.reason! };
          break;
        }
        if (m.reason) {
          reject(m, m.reason);
          done = m.id;
          i++;
          continue;
        }
        // a run of valid readings of one check, in order
        if (m.name === "reading.put/1") {
          const checkId = readingArgs(m).checkId;
          let j = i;
          while (
            j < fresh.length &&
            fresh[j]!.name === "reading.put/1" &&
            !fresh[j]!.reason &&
            readingArgs(fresh[j]!).checkId === checkId
          )
            j++;
          const run = fresh.slice(i, j);
          if (run.length > 1) {
            // a transient failure throws (the whole push is tried again); any other one means
            // something in the run is refused or failed: find it
            const ok = await step(tx, user, version, after, careful, (w) =>
              applyRun(w, "reading.put/1", run.map(readingArgs)),
            )
              .then(() => true)
              .catch((e: unknown) => {
                if (transient(e) || e instanceof StepFailed) throw e;
                return false;
              });
            if (ok) {
              done = run[run.length - 1]!.id;
              i = j;
              continue;
            }
            // each reading as if applied alone, in one step; what that cannot settle (a failure
            // that is not a refusal) is found by applying them one by one below
            const alone = await step(tx, user, version, after, careful, (w) =>
              applyReadingsAlone(w, run.map(readingArgs), isRefusal),
            ).catch((e: unknown) => {
              if (transient(e)) throw e;
              return null;
            });
            if (alone) {
              run.forEach((r, k) => {
                if (alone[k] !== undefined) reject(r, reasonOf(alone[k]));
              });
              done = run[run.length - 1]!.id;
              i = j;
              continue;
            }
          }
          for (const r of run) {
            await one(r);
            if (later) break;
            done = r.id;
          }
          i = j;
          continue;
        }
        await one(m);
        if (!later) done = m.id;
        i++;
      }
      await q.recordRejected(tx, input.clientId, refusals);
      if (done > last) await q.setLastMutation(tx, input.clientId, done);
      phase("device last id");
      // what a change held for later stopped is not this push's work either
      applied = fresh.filter((m) => m.id <= done).length;
      return done;
    });
  // a push that lost a write conflict (another device's push, another node) runs again from the
  // start, its client row read afresh, so what the winner applied is skipped (db/retry.ts)
  const lastMutationId = await retryConflicts(() =>
    attempt(false).catch((e: unknown) => {
      if (e instanceof StepFailed) return attempt(true);
      throw e;
    }),
  ).catch(async (e: unknown) => {
    // nothing was applied (a refusal of the whole push, a failure of the moment): nothing is spent
    await refundWrites(user, input.clientId, charged);
    throw e;
  });
  phase("commit");
  // a replay that raced this push applied some of it first: those were not this push's work
  await refundWrites(user, input.clientId, charged - applied);
  // notices are queued only once the changes are committed; a failure here never fails the push
  await runAfter(after);
  phase("after commit");
  countSyncRows("push", applied);
  return later ? { lastMutationId, rejected, later } : { lastMutationId, rejected };
}

/** A cursor as the phone sent it, as a place in the owner's changes (null: from the start). */
function positionOf(cursor: Cursor): q.PullPosition | null {
  // a number is an old global cursor: a full pull
  if (typeof cursor !== "string") return null;
  const [version, kind, id] = cursor.slice(CURSOR_PREFIX.length).split(":");
  return kind === undefined
    ? { version: Number(version), kind: q.END, id: "" }
    : { version: Number(version), kind: Math.min(Number(kind), q.END), id: id ?? "" };
}

/**
 * One page of the user's changes after the cursor, in one read-only transaction (one connection,
 * one snapshot): at most PULL_PAGE_ROWS rows, with `more` when another page follows; its cursor
 * says where (db/queries/sync.ts). No cursor, or an old-style numeric one, starts a full pull.
 */
export async function pull(user: SessionUser, cursor: Cursor) {
  const { upTo, next, ...changes } = await transaction((tx) => q.changesSince(tx, user.id, positionOf(cursor)), {
    isolationLevel: "repeatable read",
    accessMode: "read only",
  });
  countSyncRows(
    "pull",
    Object.values(changes).reduce((n, rows) => n + (Array.isArray(rows) ? rows.length : 0), 0),
  );
  return {
    cursor: next ? `${CURSOR_PREFIX}${next.version}:${next.kind}:${next.id}` : `${CURSOR_PREFIX}${upTo}`,
    more: next !== null,
    ...changes,
  };
}
