import "server-only";
import { claimDueNotices, enqueueNotices, markNoticeFailed, markNoticeSent, type NoticeInput } from "@/db/queries/notices";
import { env } from "@/lib/env";
import { sendMail } from "./mail";
import { composeAtSend } from "./notice-compose";

/**
 * E-mail notices go through a queue table: the request that causes one only inserts a row, so a
 * slow or failing mail server never blocks or fails it. Delivery is kicked right after, and a timer
 * (instrumentation.ts) retries what failed.
 */
export async function queueNotices(items: NoticeInput[]): Promise<void> {
  await enqueueNotices(items);
  kickDelivery();
}

/** Someone who may get a notice; those who turned notices off, and `except` (the actor), get none. */
export type Recipient = { id: string; email: string; noticesByEmail: boolean };

export async function noticeEach(recipients: Recipient[], except: string, notice: { kind: string; subject: string; body: string; aboutCheckId?: string }) {
  const to = recipients.filter((r) => r.noticesByEmail && r.id !== except);
  if (to.length) await queueNotices(to.map((r) => ({ toEmail: r.email, toUserId: r.id, ...notice })));
}

let running: Promise<number> | null = null;

export function deliverDueNotices(): Promise<number> {
  running ??= (async () => {
    let sent = 0;
    try {
      for (;;) {
        const batch = await claimDueNotices(20);
        if (batch.length === 0) break;
        for (const n of batch) {
          try {
            const mail = await composeAtSend(n);
            if (!mail) {
              await markNoticeSent(n.id, "dropped");
              continue;
            }
            await sendMail(n.toEmail, mail.subject, mail.body);
            await markNoticeSent(n.id);
            sent++;
          } catch (e) {
            await markNoticeFailed(n.id, n.attempts + 1, e instanceof Error ? e.message : String(e), 8, env().NOTICE_RETRY_SECONDS);
          }
        }
      }
    } finally {
      running = null;
    }
    return sent;
  })();
  return running;
}

export function kickDelivery(): void {
  deliverDueNotices().catch((e: unknown) => console.error("[notices] delivery failed:", e instanceof Error ? e.message : e));
}
