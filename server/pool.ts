import "server-only";
import { env } from "@/lib/env";
import { formatLength } from "@/lib/lash";
import { loanWords, MOVE_WORDS, MOVES, type BorrowInput, type BorrowMove, type OfferInput } from "@/lib/pool/rules";
import { refused } from "@/lib/errors";
import { db } from "@/db/connection";
import { nextVersion } from "@/db/versions";
import * as q from "@/db/queries/pool";
import { askableOffer, askingCheck, clubMember, loanSide, ownBorrowOrNew, ownOffer } from "./access";
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
  const existing = await q.lockOffer(tx, a.id);
  if (existing) return void ownOffer(existing, user); // the same offer sent again
  const have = await q.trayCount(tx, user.id, a.size);
  if (have < a.count) throw refused(`your tray holds ${have} of ${a.size} mm: offer at most that many`);
  await q.insertOffer(tx, version, user.id, a);
}

/** The owner takes an offer back; open requests on it are declined, and their borrowers told. */
export async function applyWithdrawOffer({ tx, version, user, later }: WriteCtx, id: string) {
  const o = ownOffer(await q.lockOffer(tx, id), user);
  if (o.withdrawnAt) return;
  const declined = await q.withdrawOffer(tx, version, id);
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

/** A request for shims of an offer; refused when fewer are left than asked for. */
export async function applyAsk({ tx, version, user, later }: WriteCtx, a: BorrowInput & { id: string }) {
  if (ownBorrowOrNew(await q.getBorrow(tx, a.id), user)) return; // the same request sent again
  // the lender is shown which check asks: it must be the asker's own, never someone else's
  if (a.checkId) await askingCheck(tx, user, a.checkId);
  const offer = await askableOffer(tx, user, await q.lockOffer(tx, a.offerId));
  const left = await q.claimLeft(tx, offer);
  if (left < a.count)
    throw refused(
      left > 0
        ? `only ${left} of ${offer.size} mm left on offer`
        : `none of ${offer.size} mm left on offer: another member asked first`,
    );
  await q.insertBorrow(tx, {
    id: a.id,
    offerId: offer.id,
    borrowerId: user.id,
    lenderId: offer.ownerId,
    checkId: a.checkId ?? null,
    size: offer.size,
    count: a.count,
    version,
  });
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

/** One step of a loan, by the side allowed to take it, with its effect on the trays; null when sent twice. */
async function moveBorrow({ tx, version, user }: WriteCtx, id: string, move: BorrowMove, returnSize: number | null) {
  const r = await q.lockBorrow(tx, id);
  const side = loanSide(r, user, move);
  const m = MOVES[move];
  if (!(m.from as readonly string[]).includes(r!.state)) {
    if (r!.state === m.to) return null; // the same step sent twice
    throw refused(`the request is ${r!.state}: it cannot be ${m.to} now`);
  }
  const loan = r!;
  const o = await q.lockOffer(tx, loan.offerId);
  const diameter = o?.shimDiameter ?? null;
  if (move === "hand-over") {
    if (o) await q.setOfferCount(tx, version, o.id, Math.max(0, o.count - loan.count));
    await q.adjustTray(tx, version, loan.lenderId, loan.size, -loan.count, diameter);
    // the borrower's tray is synced to the borrower: their next change version
    await q.adjustTray(tx, await nextVersion(tx, loan.borrowerId), loan.borrowerId, loan.size, loan.count, diameter);
  }
  const back = returnSize ?? loan.size;
  if (move === "give-back") await q.adjustTray(tx, version, loan.borrowerId, back, -loan.count, diameter);
  if (move === "settle")
    await q.adjustTray(tx, version, loan.lenderId, loan.returnSize ?? loan.size, loan.count, diameter);
  await q.setBorrowState(tx, version, id, m.to, move === "give-back" ? back : undefined);
  // the offer's note says where to collect the shims: the agreed notice carries it
  return { ...loan, state: m.to, side, note: o?.note ?? null };
}

export async function applyMove(
  { tx, version, user, later }: WriteCtx,
  a: { id: string; move: BorrowMove; returnSize?: number | null },
) {
  const r = await moveBorrow({ tx, version, user, later }, a.id, a.move, a.returnSize ?? null);
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
