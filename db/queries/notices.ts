import "server-only";
import { and, eq, sql } from "drizzle-orm";
import { db } from "../client";
import { notices } from "../schema";

export interface NoticeInput {
  toEmail: string;
  toUserId?: string | null;
  kind: string;
  subject: string;
  body: string;
  aboutCheckId?: string | null;
}

import type { Tx } from "../versions";

export async function enqueueNotices(items: NoticeInput[], tx?: Tx): Promise<void> {
  if (items.length === 0) return;
  await (tx ?? db()).insert(notices).values(items.map((n) => ({ ...n, toUserId: n.toUserId ?? null })));
}

/**
 * Claim up to `limit` notices that are due (or whose earlier claim expired, say because the instance
 * sending them died). One UPDATE with a fresh claim token, so two app instances never send one twice.
 */
export async function claimDueNotices(limit: number, claimSeconds = 60) {
  const token = crypto.randomUUID();
  await db().execute(sql`
    UPDATE notices SET status = 'sending', claim_token = ${token}, claimed_until = NOW(3) + INTERVAL ${claimSeconds} SECOND
    WHERE (status = 'queued' AND next_attempt_at <= NOW(3)) OR (status = 'sending' AND claimed_until < NOW(3))
    ORDER BY next_attempt_at LIMIT ${limit}`);
  return db().select().from(notices).where(and(eq(notices.claimToken, token), eq(notices.status, "sending")));
}

export async function markNoticeSent(id: string, status: "sent" | "dropped" = "sent"): Promise<void> {
  await db().update(notices).set({ status, claimToken: null, lastError: null }).where(eq(notices.id, id));
}

/** Back off base, 2x base, 4x base, ... (base 30 s) and give up after `maxAttempts`. */
export async function markNoticeFailed(id: string, attempts: number, error: string, maxAttempts = 8, baseSeconds = 30): Promise<void> {
  const giveUp = attempts >= maxAttempts;
  await db()
    .update(notices)
    .set({
      status: giveUp ? "failed" : "queued",
      attempts,
      claimToken: null,
      lastError: error.slice(0, 500),
      nextAttemptAt: new Date(Date.now() + baseSeconds * 1000 * 2 ** Math.min(attempts - 1, 10)),
    })
    .where(eq(notices.id, id));
}
