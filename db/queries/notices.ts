import "server-only";
import { and, eq, inArray, ne, sql } from "drizzle-orm";
import { db } from "../connection";
import { comments, mailStops, notices, users } from "../schema";
import type { Tx } from "../versions";

export type NoticeInput = Pick<
  typeof notices.$inferInsert,
  "toEmail" | "toUserId" | "kind" | "subject" | "body" | "aboutCheckId"
> & {
  /** held this long before it is due (a digest's window); 0 or absent: due at once */
  delaySeconds?: number;
};

export async function enqueueNotices(items: NoticeInput[], tx?: Tx): Promise<void> {
  if (items.length === 0) return;
  const now = Date.now();
  await (tx ?? db()).insert(notices).values(
    items.map(({ delaySeconds, ...n }) => ({
      ...n,
      subject: n.subject.slice(0, 200),
      toUserId: n.toUserId ?? null,
      ...(delaySeconds ? { nextAttemptAt: new Date(now + delaySeconds * 1000) } : {}),
    })),
  );
}

/**
 * Claim up to `limit` notices that are due (or whose earlier claim expired, say because the instance
 * sending them died). One UPDATE with a fresh claim token, so two app instances never send one twice.
 * With `gather`, for each address among them that gets digests, every other queued notice to it of a
 * kind not in `gather.except` is claimed too, due or not: they leave together in one mail.
 */
export async function claimDueNotices(limit: number, claimSeconds = 60, gather?: { except: readonly string[] }) {
  const token = crypto.randomUUID();
  await db().execute(sql`
    UPDATE notices SET status = 'sending', claim_token = ${token}, claimed_until = NOW(3) + INTERVAL ${claimSeconds} SECOND
    WHERE (status = 'queued' AND next_attempt_at <= NOW(3)) OR (status = 'sending' AND claimed_until < NOW(3))
    ORDER BY next_attempt_at LIMIT ${limit}`);
  if (gather) {
    const single = sql.join(
      gather.except.map((k) => sql`${k}`),
      sql`, `,
    );
    const emails = await db()
      .selectDistinct({ e: notices.toEmail })
      .from(notices)
      .where(and(eq(notices.claimToken, token), sql`${notices.kind} NOT IN (${single})`));
    if (emails.length)
      await db().execute(sql`
        UPDATE notices SET status = 'sending', claim_token = ${token}, claimed_until = NOW(3) + INTERVAL ${claimSeconds} SECOND
        WHERE to_email IN (${sql.join(
          emails.map((r) => sql`${r.e}`),
          sql`, `,
        )}) AND status = 'queued' AND kind NOT IN (${single})`);
  }
  return db()
    .select()
    .from(notices)
    .where(and(eq(notices.claimToken, token), eq(notices.status, "sending")))
    .orderBy(notices.createdAt);
}

export async function markNoticesSent(ids: string[], status: "sent" | "dropped" = "sent"): Promise<void> {
  if (ids.length)
    await db().update(notices).set({ status, claimToken: null, lastError: null }).where(inArray(notices.id, ids));
}

export async function markNoticeSent(id: string, status: "sent" | "dropped" = "sent"): Promise<void> {
  await markNoticesSent([id], status);
}

/** Back off base, 2x base, 4x base, ... (base 30 s) and give up after `maxAttempts`. */
export async function markNoticesFailed(
  ids: string[],
  attempts: number,
  error: string,
  maxAttempts = 8,
  baseSeconds = 30,
): Promise<void> {
  if (!ids.length) return;
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
    .where(inArray(notices.id, ids));
}

export async function markNoticeFailed(
  id: string,
  attempts: number,
  error: string,
  maxAttempts = 8,
  baseSeconds = 30,
): Promise<void> {
  await markNoticesFailed([id], attempts, error, maxAttempts, baseSeconds);
}

/** Back in the queue untouched, due after `seconds` (the recipient's mail budget is spent for now). */
export async function postponeNotices(ids: string[], seconds: number): Promise<void> {
  if (ids.length)
    await db()
      .update(notices)
      .set({ status: "queued", claimToken: null, nextAttemptAt: new Date(Date.now() + seconds * 1000) })
      .where(inArray(notices.id, ids));
}

/** Who has commented on a check besides its owner: the mentors a comment by the owner goes to. */
export async function commentersOf(checkId: string, ownerId: string): Promise<string[]> {
  const rows = await db()
    .selectDistinct({ id: comments.authorId })
    .from(comments)
    .where(and(eq(comments.checkId, checkId), ne(comments.authorId, ownerId)));
  return rows.flatMap((r) => (r.id ? [r.id] : []));
}

/** Whether an address takes mail that is not account mail: its account's setting, or no stop for it. */
export async function takesNotices(email: string): Promise<boolean> {
  const [u] = await db().select({ on: users.noticesByEmail }).from(users).where(eq(users.email, email)).limit(1);
  if (u) return u.on;
  const [stop] = await db().select({ e: mailStops.email }).from(mailStops).where(eq(mailStops.email, email)).limit(1);
  return !stop;
}

/**
 * Turn off what is not account mail for an address: its account's notices (which the account page
 * can turn back on), or, with no account, a stop on the address. Notices already queued to it are
 * dropped when their turn comes (server/notice-compose.ts).
 */
export async function stopNotices(tx: Tx, email: string): Promise<void> {
  const [u] = await tx.select({ id: users.id }).from(users).where(eq(users.email, email)).limit(1);
  if (u) await tx.update(users).set({ noticesByEmail: false }).where(eq(users.id, u.id));
  else await tx.insert(mailStops).values({ email }).onDuplicateKeyUpdate({ set: { email } });
}
