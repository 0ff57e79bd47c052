import "server-only";
import { AsyncLocalStorage } from "node:async_hooks";
import { createHmac, randomBytes, timingSafeEqual } from "node:crypto";
import {
  claimDueNotices,
  enqueueNotices,
  markNoticesFailed,
  markNoticesSent,
  postponeNotices,
  type NoticeInput,
} from "@/db/queries/notices";
import type { NoticeRow } from "@/db/schema";
import { usersByIds } from "@/db/queries/clubs";
import { env } from "@/lib/env";
import { merge } from "@/lib/mail/digest";
import { isAccountMail, isGathered, SINGLE_KINDS } from "@/lib/mail/kinds";
import { budget } from "./budgets";
import { stopMail } from "./account-changes";
import { sendMail } from "./mail";
import { composeGroup } from "./notice-compose";
import { log } from "./log";

/**
 * E-mail notices go through a queue table: the request that causes one only inserts a row, so a
 * slow or failing mail server never blocks or fails it. Delivery is kicked right after, and a timer
 * (instrumentation.ts) retries what failed.
 *
 * Account mail goes at once and is never stopped; an invitation goes at once and can be stopped;
 * notices are gathered per address into one mail per window (NOTICE_DIGEST_SECONDS), can be
 * stopped, and are under the address's mail budget (lib/mail/kinds.ts).
 */
export async function queueNotices(items: NoticeInput[]): Promise<void> {
  const wait = env().NOTICE_DIGEST_SECONDS;
  await enqueueNotices(items.map((n) => (isGathered(n.kind) ? { ...n, delaySeconds: wait } : n)));
  kickDelivery();
  // the window's end is this instance's to keep: the timer alone could leave a digest up to 15 s late
  if (items.some((n) => isGathered(n.kind))) setTimeout(kickDelivery, wait * 1000 + 250).unref();
}

/** Someone who may get a notice; those who turned notices off, and `except` (the actor), get none. */
export type Recipient = { id: string; email: string; noticesByEmail: boolean };
export type NoticeBody = { kind: string; subject: string; body: string; aboutCheckId?: string };

export async function noticeEach(recipients: Recipient[], except: string, notice: NoticeBody) {
  const to = recipients.filter((r) => r.noticesByEmail && r.id !== except);
  if (to.length) await queueNotices(to.map((r) => ({ toEmail: r.email, toUserId: r.id, ...notice })));
}

/**
 * The notices of one piece of work (a push's mutations, a REST write) are worked out together: each
 * notice only records who it is for, and at the end one lookup finds those people, notices of one
 * kind about one thing to one person become one, and one insert queues them. Lookups that many
 * notices share (who has commented on a check) are made once per batch through `shared()`. Without
 * a batch (a caller outside one) each notice is queued at once, as before.
 */
type Intent = { userIds: string[]; except: string; notice: NoticeBody };
type Batch = { intents: Intent[]; memo: Map<string, Promise<unknown>> };
const batches = new AsyncLocalStorage<Batch>();

export async function gatherNotices<T>(fn: () => Promise<T>): Promise<T> {
  const batch: Batch = { intents: [], memo: new Map() };
  try {
    return await batches.run(batch, fn);
  } finally {
    await flush(batch.intents).catch((e: unknown) => log.error({ err: e }, "notices: queueing failed"));
  }
}

/** One answer per batch for a lookup that many of its notices make (outside a batch: asked each time). */
export function shared<T>(key: string, fn: () => Promise<T>): Promise<T> {
  const batch = batches.getStore();
  if (!batch) return fn();
  let p = batch.memo.get(key) as Promise<T> | undefined;
  if (!p) batch.memo.set(key, (p = fn()));
  return p;
}

/** A notice to these accounts (all but `except`, the one who acted, and those with notices off). */
export async function noticeTo(userIds: string[], except: string, notice: NoticeBody): Promise<void> {
  const intent = { userIds, except, notice };
  const batch = batches.getStore();
  if (batch) batch.intents.push(intent);
  else await flush([intent]);
}

async function flush(intents: Intent[]): Promise<void> {
  if (!intents.length) return;
  const people = new Map((await usersByIds([...new Set(intents.flatMap((i) => i.userIds))])).map((u) => [u.id, u]));
  // one notice per person, kind and check: twenty asks to one lender in one push are one notice
  const merged = new Map<string, { input: NoticeInput; texts: { subject: string; body: string }[] }>();
  for (const { userIds, except, notice } of intents) {
    for (const id of new Set(userIds)) {
      const r = people.get(id);
      if (!r || !r.noticesByEmail || r.id === except) continue;
      const key = `${r.id}\n${notice.kind}\n${notice.aboutCheckId ?? ""}`;
      const m = merged.get(key);
      if (m) m.texts.push(notice);
      else
        merged.set(key, {
          input: {
            toEmail: r.email,
            toUserId: r.id,
            kind: notice.kind,
            aboutCheckId: notice.aboutCheckId ?? null,
            subject: "",
            body: "",
          },
          texts: [notice],
        });
    }
  }
  if (!merged.size) return;
  await queueNotices([...merged.values()].map(({ input, texts }) => ({ ...input, ...merge(texts) })));
}

/**
 * Notice mails per address, whoever causes them. The digest already sends at most one per window
 * (20 an hour at the default 180 s); these are the backstop for several app instances or a short
 * window: 30 an hour and 100 a day. Beyond them a digest waits (nothing is lost, it grows).
 */
const mailsPerHour = budget({ name: "mail:to:hour", points: 30, seconds: 3600 });
const mailsPerDay = budget({ name: "mail:to:day", points: 100, seconds: 86_400 });

/** Spend one mail of an address's budget; the wait in seconds when it is spent. */
async function spendRecipient(email: string): Promise<number | null> {
  const key = email.toLowerCase();
  const hour = await mailsPerHour.take(key);
  if (!hour.ok) return hour.retryAfterSeconds;
  const day = await mailsPerDay.take(key);
  if (!day.ok) {
    await mailsPerHour.refund(key);
    return day.retryAfterSeconds;
  }
  return null;
}

// ---- one-click unsubscribe (RFC 8058) ---------------------------------------------------------

let fallbackSecret: string | undefined;
function unsubscribeKey(): Buffer {
  // without a configured secret (a development server), a per-process one: links stop working at a restart
  const secret = env().NEXTAUTH_SECRET ?? (fallbackSecret ??= randomBytes(32).toString("base64url"));
  return createHmac("sha256", secret).update("lashwright unsubscribe v1").digest();
}
const mac = (email: string) => createHmac("sha256", unsubscribeKey()).update(email.toLowerCase()).digest("base64url");

/** A token that names an address and proves the server made it; it does not expire (RFC 8058 3.1). */
export function unsubscribeToken(email: string): string {
  return `${Buffer.from(email.toLowerCase()).toString("base64url")}.${mac(email)}`;
}

function addressOf(token: string): string | null {
  const m = /^([A-Za-z0-9_-]{1,400})\.([A-Za-z0-9_-]{43})$/.exec(token);
  if (!m) return null;
  const email = Buffer.from(m[1]!, "base64url").toString("utf8");
  const want = Buffer.from(mac(email));
  const got = Buffer.from(m[2]!);
  return want.length === got.length && timingSafeEqual(want, got) ? email : null;
}

/** Stop notices (and invitations) to the address a token names; false for a token we did not make. */
export async function unsubscribe(token: string): Promise<boolean> {
  const email = addressOf(token);
  if (!email) return false;
  await stopMail(email);
  return true;
}

const base = () => env().NEXTAUTH_URL.replace(/\/$/, "");
/** What a mail client POSTs to (List-Unsubscribe) and the page a reader opens from the mail's text. */
export const unsubscribePostUrl = (email: string) =>
  `${base()}/api/notices/unsubscribe?token=${unsubscribeToken(email)}`;
const unsubscribePageUrl = (email: string) => `${base()}/unsubscribe?token=${unsubscribeToken(email)}`;

function footer(email: string, account: boolean): string {
  return account
    ? `--\nYou get this because e-mail notices are on for your Lashwright account. To stop them, open:\n${unsubscribePageUrl(email)}\nTo turn them back on later: ${base()}/account`
    : `--\nYou got this because someone entered this address in Lashwright. To get no more of these, open:\n${unsubscribePageUrl(email)}`;
}

// ---- delivery ---------------------------------------------------------------------------------

/** Gathered notices leave together per address; every other mail alone. */
function groups(rows: NoticeRow[]): NoticeRow[][] {
  const out: NoticeRow[][] = [];
  const byAddress = new Map<string, NoticeRow[]>();
  for (const n of rows) {
    if (!isGathered(n.kind)) {
      out.push([n]);
      continue;
    }
    const key = n.toEmail.toLowerCase();
    const g = byAddress.get(key);
    if (g) g.push(n);
    else byAddress.set(key, [n]);
  }
  return [...out, ...byAddress.values()];
}

async function deliver(group: NoticeRow[]): Promise<number> {
  const first = group[0]!;
  let pending = group.map((n) => n.id);
  let spent = false;
  try {
    const { mail, keep, drop } = await composeGroup(group);
    await markNoticesSent(drop, "dropped");
    pending = keep;
    if (!mail || !keep.length) return 0;
    const stoppable = !isAccountMail(first.kind);
    if (stoppable) {
      const wait = await spendRecipient(first.toEmail);
      if (wait !== null) {
        await postponeNotices(keep, wait);
        return 0;
      }
      spent = true;
    }
    const text = stoppable ? `${mail.body}\n\n${footer(first.toEmail, first.kind !== "invite")}` : mail.body;
    await sendMail(
      first.toEmail,
      mail.subject,
      text,
      stoppable ? { unsubscribeUrl: unsubscribePostUrl(first.toEmail) } : {},
    );
    await markNoticesSent(keep);
    return 1;
  } catch (e) {
    // a mail that did not leave costs its address nothing
    if (spent)
      await Promise.all([
        mailsPerHour.refund(first.toEmail.toLowerCase()),
        mailsPerDay.refund(first.toEmail.toLowerCase()),
      ]).catch(() => undefined);
    const attempts = Math.max(...group.map((n) => n.attempts)) + 1;
    await markNoticesFailed(
      pending,
      attempts,
      e instanceof Error ? e.message : String(e),
      8,
      env().NOTICE_RETRY_SECONDS,
    );
    return 0;
  }
}

async function drain(): Promise<number> {
  let sent = 0;
  for (;;) {
    const batch = await claimDueNotices(20, 60, { except: SINGLE_KINDS });
    if (batch.length === 0) return sent;
    for (const g of groups(batch)) sent += await deliver(g);
  }
}

let running: Promise<number> | null = null;
let again = false;

export function deliverDueNotices(): Promise<number> {
  if (running) {
    // a kick while a run is finishing: run once more, so a notice that just fell due is not left waiting
    again = true;
    return running;
  }
  running = (async () => {
    let sent = 0;
    try {
      do {
        again = false;
        sent += await drain();
      } while (again);
    } finally {
      running = null;
    }
    return sent;
  })();
  return running;
}

export function kickDelivery(): void {
  deliverDueNotices().catch((e: unknown) => log.error({ err: e }, "notices: delivery failed"));
}
