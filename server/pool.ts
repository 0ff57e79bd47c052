import "server-only";
import { env } from "@/lib/env";
import { formatLength } from "@/lib/lash";
import { MOVES, STATE_WORDS, type BorrowInput, type BorrowMove, type OfferInput } from "@/lib/pool/rules";
import { rolesInClub, usersByIds } from "@/db/queries/clubs";
import * as q from "@/db/queries/pool";
import { Refused } from "@/db/errors";
import { versioned, type Tx } from "@/db/versions";
import { noticeEach } from "./notices";
import type { SessionUser } from "./auth";

/**
 * The club pool's rules, shared by the REST routes and sync pushes: only members see or use a
 * club's pool, an offer shares nothing but the shims and the note, and each step of a loan tells
 * the other side by e-mail (through the notice queue, after the change is committed).
 */
export type After = () => Promise<void>;

const isMember = async (userId: string, clubId: string) => (await rolesInClub(userId, clubId)).length > 0;
const mm = (n: number) => formatLength(n, "mm");
const link = () => `${env().NEXTAUTH_URL}/club`;

async function tell(toId: string, kind: string, subject: string, body: string) {
  await noticeEach(await usersByIds([toId]), "", { kind, subject, body: `${body}\n\n${link()}` });
}

export async function applyOffer(tx: Tx, version: number, user: SessionUser, a: OfferInput & { id: string }) {
  if (!(await isMember(user.id, a.clubId))) throw new Refused("no such club", 404);
  await q.putOffer(tx, version, user.id, a);
}

export async function applyWithdrawOffer(tx: Tx, version: number, user: SessionUser, id: string): Promise<After> {
  const declined = await q.withdrawOffer(tx, version, user.id, id);
  return async () => {
    for (const r of declined) await tell(r.borrowerId, "borrow", `${user.name} has taken back an offer`, `${user.name} no longer offers the shims you asked for; your request is declined.`);
  };
}

export async function applyAsk(tx: Tx, version: number, user: SessionUser, a: BorrowInput & { id: string }): Promise<After | void> {
  const offer = await q.askBorrow(tx, version, user.id, a, (clubId) => isMember(user.id, clubId));
  if (!offer) return;
  return () => tell(offer.ownerId, "borrow", `${user.name} asks to borrow ${a.count} × ${mm(offer.size)}`, `${user.name} would like to borrow ${a.count} of your ${mm(offer.size)} shims from the club pool. Agree or decline on the club page.`);
}

export async function applyMove(tx: Tx, version: number, user: SessionUser, a: { id: string; move: BorrowMove; returnSize?: number | null }): Promise<After | void> {
  const r = await q.moveBorrow(tx, version, user.id, a.id, a.move, a.returnSize ?? null);
  if (!r) return;
  const other = r.side === "lender" ? r.borrowerId : r.lenderId;
  return () => tell(other, "borrow", `Shim loan ${a.move === "hand-over" ? "handed over" : MOVES[a.move].to}: ${r.count} × ${mm(r.size)}`, `${user.name} marked the loan of ${r.count} × ${mm(r.size)}: ${STATE_WORDS[MOVES[a.move].to]}.`);
}

/** For the REST routes: one transaction with its version, then the notices. */
export async function run(fn: (tx: Tx, version: number) => Promise<After | void>) {
  const after = await versioned(fn);
  if (after) await after().catch((e: unknown) => console.error("[pool] notice failed:", e instanceof Error ? e.message : e));
}

export async function clubPool(user: SessionUser, clubId: string) {
  if (!(await isMember(user.id, clubId))) throw new Refused("no such club", 404);
  return q.listOffers(clubId);
}
