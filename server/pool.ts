import "server-only";
import { env } from "@/lib/env";
import { formatLength } from "@/lib/lash";
import { loanWords, MOVE_WORDS, MOVES, type BorrowInput, type BorrowMove, type OfferInput } from "@/lib/pool/rules";
import { rolesInClub } from "@/db/queries/clubs";
import { db } from "@/db/client";
import * as q from "@/db/queries/pool";
import { clubMember } from "./access";
import { noticeTo } from "./notices";
import { checkTitle } from "./review";
import type { WriteCtx } from "./write";
import type { SessionUser } from "./auth";

/**
 * The club pool's rules, the appliers of the pool's mutations (sync pushes and the REST routes
 * alike): only members see or use a club's pool, an offer shares nothing but the shims and the
 * note, and each step of a loan tells the other side by e-mail (after the change is committed).
 */
const mm = (n: number) => formatLength(n, "mm");
const link = () => `${env().NEXTAUTH_URL}/club`;

async function tell(toId: string, kind: string, subject: string, body: string) {
  await noticeTo([toId], "", { kind, subject, body: `${body}\n\n${link()}` });
}

export async function applyOffer({ tx, version, user }: WriteCtx, a: OfferInput & { id: string }) {
  await clubMember(tx, user, a.clubId);
  await q.putOffer(tx, version, user.id, a);
}

export async function applyWithdrawOffer({ tx, version, user, later }: WriteCtx, id: string) {
  const declined = await q.withdrawOffer(tx, version, user.id, id);
  later(async () => {
    for (const r of declined)
      await tell(
        r.borrowerId,
        "borrow",
        `${user.name} has taken back an offer`,
        `${user.name} no longer offers the shims you asked for; your request is declined.`,
      );
  });
}

export async function applyAsk({ tx, version, user, later }: WriteCtx, a: BorrowInput & { id: string }) {
  // a locking read: an ask racing the asker's removal from the club cannot slip in after it
  const offer = await q.askBorrow(
    tx,
    version,
    user.id,
    a,
    async (clubId) => (await rolesInClub(tx, user.id, clubId, true)).length > 0,
  );
  if (!offer) return;
  later(async () => {
    const title = await checkTitle(a.checkId);
    const forWhat = title ? ` for ${title}` : "";
    await tell(
      offer.ownerId,
      "borrow",
      `${user.name} asks to borrow ${a.count} × ${mm(offer.size)}${forWhat}`,
      `${user.name} would like to borrow ${a.count} of your ${mm(offer.size)} shims from the club pool${forWhat}. Agree or decline on the club page.`,
    );
  });
}

export async function applyMove(
  { tx, version, user, later }: WriteCtx,
  a: { id: string; move: BorrowMove; returnSize?: number | null },
) {
  const r = await q.moveBorrow(tx, version, user.id, a.id, a.move, a.returnSize ?? null);
  if (!r) return;
  const other = r.side === "lender" ? r.borrowerId : r.lenderId;
  later(async () => {
    // the engine and check the loan is for; an agreed loan carries the lender's note on where to collect
    const title = await checkTitle(r.checkId);
    const forWhat = title ? ` for ${title}` : "";
    const collect = a.move === "agree" && r.note ? `\n\nWhere to collect them (${user.name}'s note): ${r.note}` : "";
    const state = loanWords(MOVES[a.move].to, r.side === "lender" ? "borrower" : "lender");
    await tell(
      other,
      "borrow",
      `Shim loan ${MOVE_WORDS[a.move]}: ${r.count} × ${mm(r.size)}${title ? ` (${title})` : ""}`,
      `${user.name} marked the loan of ${r.count} × ${mm(r.size)}${forWhat}: ${state}.${collect}`,
    );
  });
}

export async function clubPool(user: SessionUser, clubId: string) {
  await clubMember(db(), user, clubId);
  return q.listOffers(clubId);
}
