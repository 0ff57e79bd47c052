"use client";

import { formatLength, sameLength, type ShimPlan } from "@/lib/lash";
import type { PoolFit } from "@/lib/check/pool";
import { STATE_WORDS } from "@/lib/pool/rules";
import { askToBorrow } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import type { usePool } from "./use-pool";

/**
 * The plan's borrowing: each lender and size the plan takes from the club pool, with the request's
 * state or a button to ask; and sizes on offer that this engine cannot use, with the reason.
 */
export function BorrowList({
  plan,
  pool,
  fit,
  checkId,
}: {
  plan: ShimPlan;
  pool: ReturnType<typeof usePool>;
  fit: PoolFit;
  checkId: string;
}) {
  const { db, user } = useLocalCore();
  const names = new Map(pool.offers.map((o) => [o.ownerId, o.ownerName]));
  const mm = (n: number) => formatLength(n, "mm");
  const misfits = fit.wrongSystem.filter((o) => plan.buy.some((b) => sameLength(b.size, o.size)));
  // every offer is for another shim system (or cannot be matched): say so rather than show nothing
  const noneFit = fit.pool.length === 0 && fit.wrongSystem.length > 0 && plan.buy.length > 0;
  if (plan.borrow.length === 0 && misfits.length === 0 && !noneFit) return null;
  return (
    <section aria-labelledby="borrow-title" className="rounded-2xl border border-line bg-surface p-4">
      <h2 id="borrow-title" className="text-xl font-extrabold">
        Borrow from the club
      </h2>
      <ul className="flex flex-col gap-3" data-testid="borrow-list">
        {plan.borrow.map((b) => {
          const offers = pool.offeredToMe.filter((o) => o.ownerId === b.ownerId && sameLength(o.size, b.size));
          const asked = pool.borrows.filter(
            (r) =>
              r.borrowerId === user?.id &&
              r.lenderId === b.ownerId &&
              sameLength(r.size, b.size) &&
              !["declined", "withdrawn", "settled"].includes(r.state),
          );
          const waiting = pool.pendingAsks.filter((a) => offers.some((o) => o.id === a.offerId));
          const who = names.get(b.ownerId) ?? "a member";
          return (
            <li key={`${b.ownerId}-${b.size}`} className="flex flex-col gap-1">
              <p className="figures text-lg">
                {b.count} × {mm(b.size)} from <strong>{who}</strong>
                {offers[0]?.note ? <span className="block text-sm text-ink-soft">“{offers[0].note}”</span> : null}
              </p>
              {asked.length > 0 ? (
                <p className="font-bold">{asked.map((r) => `${r.count}: ${STATE_WORDS[r.state]}`).join("; ")}</p>
              ) : waiting.length > 0 ? (
                <p className="font-bold text-ink-soft">asked on this phone: waiting to send</p>
              ) : (
                <Button
                  type="button"
                  look="plain"
                  disabled={!db || offers.length === 0}
                  onClick={async () => {
                    if (!db || !offers[0]) return;
                    await askToBorrow(db, { id: crypto.randomUUID(), offerId: offers[0].id, count: b.count, checkId });
                    void pool.refresh();
                  }}
                >
                  Ask {who} for {b.count} × {mm(b.size)}
                </Button>
              )}
            </li>
          );
        })}
      </ul>
      {noneFit && misfits.length === 0 && (
        <Notice>
          None of the club&apos;s {fit.wrongSystem.length} offer{fit.wrongSystem.length === 1 ? "" : "s"} can be used
          for this engine: {[...new Set(fit.wrongSystem.map((o) => o.reason))].join("; ")}.
        </Notice>
      )}
      {misfits.length > 0 && (
        <Notice>
          {misfits
            .map((o) => `${mm(o.size)} is in the pool (${o.ownerName}) but cannot be used: ${o.reason}.`)
            .join(" ")}
        </Notice>
      )}
    </section>
  );
}
