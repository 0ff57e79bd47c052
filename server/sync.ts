import "server-only";
import { LashInputError } from "@/lib/lash";
import { parseMutation, type MutationArgs, type PushInput } from "@/lib/sync/mutations";
import type { ReadingInput } from "@/lib/schemas/records";
import { db } from "@/db/client";
import { nextVersion, type Tx } from "@/db/versions";
import * as q from "@/db/queries/sync";
import { Refused } from "@/db/errors";
import { mentorSharesForCheck, writeVerdict } from "@/db/queries/clubs";
import { noticeNewComment, noticeVerdict } from "./review";
import { shareFor } from "./access";
import * as pool from "./pool";
import { getCheckRow } from "@/db/queries/garage";
import { ApiError } from "./http";
import { checkReadingsFit } from "./engines";
import type { SessionUser } from "./auth";

/**
 * The server side of the sync protocol (DESIGN.md section 6). A push is applied in one transaction:
 * mutations at or below the client's last applied id are skipped (replays are harmless), each new
 * one runs in its own savepoint so a refused one rolls back alone and is recorded with its reason,
 * runs of readings of one check go in as one multi-row upsert, and the new last id is written in
 * the same transaction.
 */
export interface PushResult {
  lastMutationId: number;
  rejected: { id: number; name: string; reason: string }[];
}

type Parsed = { id: number; name: string; args: unknown; reason?: string };

function reasonOf(e: unknown): string {
  if (e instanceof Refused || e instanceof LashInputError) return e.message;
  if (e instanceof ApiError) return e.message;
  return "the server could not apply this change";
}

const isMentorOf = async (user: SessionUser, checkId: string) => (await mentorSharesForCheck(user.id, checkId)).length > 0;

/** Work that must wait for the push to commit (e-mail notices), returned by applyOne. */
type After = () => Promise<void>;

async function applyOne(tx: Tx, user: SessionUser, version: number, m: Parsed): Promise<After | void> {
  const a = m.args;
  switch (m.name) {
    case "engine.put/1":
      return q.applyEnginePut(tx, user.id, version, a as MutationArgs<"engine.put/1">);
    case "engine.delete/1":
      return q.applyEngineDelete(tx, user.id, version, a as { id: string });
    case "check.put/1":
      return q.applyCheckPut(tx, user.id, version, a as MutationArgs<"check.put/1">);
    case "check.delete/1":
      return q.applyCheckDelete(tx, user.id, version, a as { id: string });
    case "reading.put/1": {
      const r = a as MutationArgs<"reading.put/1">;
      return q.applyReadings(tx, user.id, version, r.checkId, [r.reading], checkReadingsFit);
    }
    case "tray.put/1":
      return q.applyTrayPut(tx, user.id, version, a as MutationArgs<"tray.put/1">);
    case "tray.delete/1":
      return q.applyTrayDelete(tx, user.id, version, a as { id: string });
    case "comment.add/1": {
      const c = a as MutationArgs<"comment.add/1">;
      if (!(await q.applyCommentAdd(tx, user.id, version, c, (id) => isMentorOf(user, id)))) return;
      return async () => {
        const check = await getCheckRow(c.checkId);
        if (check) await noticeNewComment(check, user, c.body);
      };
    }
    case "pool.offer/1":
      return pool.applyOffer(tx, version, user, a as MutationArgs<"pool.offer/1">);
    case "pool.withdraw/1":
      return pool.applyWithdrawOffer(tx, version, user, (a as { id: string }).id);
    case "borrow.ask/1":
      return pool.applyAsk(tx, version, user, a as MutationArgs<"borrow.ask/1">);
    case "borrow.move/1":
      return pool.applyMove(tx, version, user, a as MutationArgs<"borrow.move/1">);
    case "verdict.set/1": {
      const v = a as MutationArgs<"verdict.set/1">;
      const { check } = await shareFor(user, v.shareId, "mentor");
      await writeVerdict(tx, version, v.shareId, user.id, v.verdict);
      return () => noticeVerdict(check, user.name, v.verdict);
    }
  }
}

export async function push(user: SessionUser, input: PushInput): Promise<PushResult> {
  const rejected: PushResult["rejected"] = [];
  const after: After[] = [];
  const lastMutationId = await db().transaction(async (tx) => {
    let last: number;
    try {
      last = await q.lockClient(tx, input.clientId, user.id);
    } catch (e) {
      if (e instanceof q.Refused) throw new ApiError(403, "forbidden", e.message);
      throw e;
    }
    const fresh: Parsed[] = input.mutations
      .filter((m) => m.id > last)
      .map((m) => {
        const p = parseMutation(m.name, m.args);
        return p.ok ? { id: m.id, name: p.name, args: p.args } : { id: m.id, name: m.name, args: m.args, reason: p.reason };
      });
    if (fresh.length === 0) return last;
    const version = await nextVersion(tx);
    const reject = async (m: Parsed, reason: string) => {
      rejected.push({ id: m.id, name: m.name, reason });
      await q.recordRejected(tx, input.clientId, m.id, m.name, reason);
    };
    for (let i = 0; i < fresh.length; ) {
      const m = fresh[i]!;
      if (m.reason) {
        await reject(m, m.reason);
        i++;
        continue;
      }
      // a run of valid readings of one check, in order
      if (m.name === "reading.put/1") {
        const checkId = (m.args as MutationArgs<"reading.put/1">).checkId;
        let j = i;
        while (j < fresh.length && fresh[j]!.name === "reading.put/1" && !fresh[j]!.reason && (fresh[j]!.args as MutationArgs<"reading.put/1">).checkId === checkId) j++;
        const run = fresh.slice(i, j);
        if (run.length > 1) {
          const rs: ReadingInput[] = run.map((r) => (r.args as MutationArgs<"reading.put/1">).reading);
          const ok = await tx
            .transaction(async (sp) => q.applyReadings(sp, user.id, version, checkId, rs, checkReadingsFit))
            .then(() => true)
            .catch(() => false);
          if (ok) {
            i = j;
            continue;
          }
          // something in the run is refused: apply them one by one to find it
        }
        for (const r of run) await tx.transaction((sp) => applyOne(sp, user, version, r)).catch((e: unknown) => reject(r, reasonOf(e)));
        i = j;
        continue;
      }
      await tx
        .transaction((sp) => applyOne(sp, user, version, m))
        .then((then) => then && after.push(then))
        .catch((e: unknown) => reject(m, reasonOf(e)));
      i++;
    }
    const newLast = fresh[fresh.length - 1]!.id;
    await q.setLastMutation(tx, input.clientId, newLast);
    return newLast;
  });
  // notices are queued only once the changes are committed; a failure here never fails the push
  for (const then of after) await then().catch((e: unknown) => console.error("[sync] notice after push failed:", e instanceof Error ? e.message : e));
  return { lastMutationId, rejected };
}

export async function pull(user: SessionUser, cursor: number | null) {
  const from = cursor ?? 0;
  const upTo = await q.stableCursor(from);
  const changes = await q.changesFor(user.id, from, upTo);
  return { cursor: upTo, full: cursor === null, ...changes };
}
