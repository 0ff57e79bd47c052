"use client";

import { formatLength, shimNumber } from "@/lib/lash";
import { loanWords, movesFor, MOVES, type ApiBorrow, type BorrowMove } from "@/lib/pool/rules";
import { moveLoan, withdrawOffer } from "@/lib/sync/later";
import type { ClubSummary } from "@/lib/api/client";
import { useLocalCore } from "@/components/sync/local-provider";
import { useId, useState } from "react";
import { Button, Field, inputClass } from "@/components/ui/controls";
import { usePool } from "./use-pool";
import { parseDecimal } from "@/lib/parse-decimal";

const mm = (n: number) => formatLength(n, "mm");

/** Give back other shims in exchange (for example the ones that came out of the engine). */
function SwapBack({ onGive }: { onGive: (size: number) => void }) {
  const [size, setSize] = useState("");
  const [error, setError] = useState<string | null>(null);
  const id = useId();
  return (
    <div className="flex flex-wrap items-end gap-2">
      <Field id={id} label="or give back another size (mm)" error={error ?? undefined}>
        <input
          id={id}
          inputMode="decimal"
          className={`${inputClass} w-32`}
          value={size}
          onChange={(e) => setSize(e.target.value)}
        />
      </Field>
      <Button
        type="button"
        look="quiet"
        onClick={() => {
          const n = parseDecimal(size);
          if (n == null || !(n > 0 && n < 20)) return setError("Enter the size in mm, e.g. 2.60");
          setError(null);
          onGive(n);
        }}
      >
        Give these back instead
      </Button>
    </div>
  );
}

function Loan({
  b,
  side,
  pending,
  onMove,
}: {
  b: ApiBorrow;
  side: "lender" | "borrower";
  pending: BorrowMove | undefined;
  onMove: (m: BorrowMove, returnSize?: number | null) => void;
}) {
  const other = side === "lender" ? b.borrowerName : b.lenderName;
  const moves = pending ? [] : movesFor(b.state, side);
  return (
    <li className="flex flex-col gap-2 rounded-xl border border-line p-3" data-testid={`loan-${b.id}`}>
      <p>
        <span className="figures font-bold">
          {b.count} × {mm(b.size)}
        </span>{" "}
        {side === "lender" ? "to" : "from"} <strong>{other}</strong>:{" "}
        {pending ? `${loanWords(MOVES[pending].to, side)} (waiting to send)` : loanWords(b.state, side)}
        {b.returnSize != null && b.returnSize !== b.size ? (
          <span className="block text-sm text-ink-soft">coming back as {mm(b.returnSize)}</span>
        ) : null}
      </p>
      {moves.length > 0 && (
        <div className="flex flex-wrap gap-2">
          {moves.map((m) => (
            <Button
              key={m}
              type="button"
              look={m === "decline" || m === "withdraw" ? "quiet" : "plain"}
              onClick={() => onMove(m)}
            >
              {MOVES[m].label}
            </Button>
          ))}
        </div>
      )}
      {moves.includes("give-back") && <SwapBack onGive={(size) => onMove("give-back", size)} />}
    </li>
  );
}

/** A club's shim pool and the loans of the signed-in member, with the steps they may take. */
export function PoolPanel({ club }: { club: ClubSummary }) {
  const { db, user } = useLocalCore();
  const pool = usePool();
  const offers = pool.offers.filter((o) => o.clubId === club.id);
  const loans = pool.borrows.filter(
    (b) => b.clubId === club.id && !["declined", "withdrawn", "settled"].includes(b.state),
  );
  const pendingMove = (id: string) => pool.pendingMoves.filter((m) => m.id === id).at(-1)?.move;
  const move = async (id: string, m: BorrowMove, returnSize?: number | null) => {
    if (!db) return;
    await moveLoan(db, { id, move: m, returnSize: returnSize ?? null });
    void pool.refresh();
  };
  return (
    <section className="flex flex-col gap-3" aria-labelledby={`pool-${club.id}`}>
      <h3 id={`pool-${club.id}`} className="text-lg font-bold">
        Shim pool
      </h3>
      {offers.length === 0 ? (
        <p className="text-ink-soft">No spare shims on offer. Offer yours from the tray.</p>
      ) : (
        <ul className="flex flex-col gap-1" data-testid="pool-offers">
          {offers.map((o) => (
            <li key={o.id} className="flex flex-wrap items-baseline justify-between gap-2 border-b border-line py-1">
              {/* an offer whose shims are all lent or asked for is said in words, not as "0 ×" */}
              <span className="figures text-lg font-bold" data-testid={`offer-${o.id}`}>
                {o.available > 0
                  ? `${o.available} × ${shimNumber(o.size, o.measuredSize)} mm`
                  : `${shimNumber(o.size, o.measuredSize)} mm: all lent out or asked for`}
              </span>
              <span className="text-sm text-ink-soft">
                {o.ownerId === user?.id ? "yours" : o.ownerName}
                {o.shimDiameter ? ` · ${o.shimDiameter} mm diameter` : " · diameter not given"}
                {o.note ? ` · ${o.note}` : ""}
              </span>
              {o.ownerId === user?.id && (
                <Button
                  type="button"
                  look="quiet"
                  onClick={() => db && withdrawOffer(db, o.id).then(() => pool.refresh())}
                >
                  Take back
                </Button>
              )}
            </li>
          ))}
        </ul>
      )}
      {loans.length > 0 && (
        <>
          <h3 className="text-lg font-bold">Loans</h3>
          <ul className="flex flex-col gap-2">
            {loans.map((b) => (
              <Loan
                key={b.id}
                b={b}
                side={b.lenderId === user?.id ? "lender" : "borrower"}
                pending={pendingMove(b.id)}
                onMove={(m, r) => void move(b.id, m, r)}
              />
            ))}
          </ul>
        </>
      )}
    </section>
  );
}
