"use client";

import { useLiveQuery } from "dexie-react-hooks";
import { useEffect, useRef, useState } from "react";
import type { ShimMove } from "@/lib/lash";
import { valveLabel, type ValveView } from "@/lib/check/derive";
import { workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import { getMeta, type LocalEngine } from "@/lib/sync/local-db";
import { offerToClub, toggleSwap } from "@/lib/sync/writes";
import { usePool } from "@/components/pool/use-pool";
import { useLocal } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";

function placeWords(p: ShimMove["from"]) {
  return p.kind === "valve" ? p.valveId : p.kind === "tray" ? "the tray" : p.kind === "shop" ? "the new (bought) shims" : p.kind === "club" ? "the borrowed shims" : "the side (set aside)";
}

/** One tap: offer the club the shims this check sent back to the tray. */
function OfferReturned({ moves, engine }: { moves: ShimMove[]; engine: LocalEngine }) {
  const { db } = useLocal();
  const pool = usePool();
  const [sent, setSent] = useState(false);
  const back = new Map<number, number>();
  for (const m of moves) if (m.to.kind === "tray") back.set(m.size, (back.get(m.size) ?? 0) + 1);
  const club = pool.clubs[0];
  if (!club || back.size === 0) return null;
  const total = [...back.values()].reduce((a, b) => a + b, 0);
  if (sent) return <Notice tone="ok">✓ Offered to {club.name}: {total} shim{total === 1 ? "" : "s"}.</Notice>;
  return (
    <Button
      type="button"
      look="plain"
      onClick={async () => {
        if (!db) return;
        for (const [size, count] of back) await offerToClub(db, { id: crypto.randomUUID(), clubId: club.id, size, measuredSize: false, count, shimDiameter: engine.shimDiameter ?? null, note: `came out of ${engine.name}` });
        setSent(true);
        void pool.refresh();
      }}
    >
      Offer the {total} shim{total === 1 ? "" : "s"} back on the tray to {club.name}
    </Button>
  );
}

/** Step 4: the swap list in working order, ticked one by one; the tray follows the ticks. */
export function FitStep({ engine, views, checkId, startFit, onDone, focusHeading = false }: { engine: LocalEngine; views: ValveView[]; checkId: string; startFit: () => void; onDone: () => void; focusHeading?: boolean }) {
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const { db } = useLocal();
  // the list kept when fitting began (lib/check/fit), so a reload mid-fit keeps list and ticks
  const order = useLiveQuery(async () => (db ? ((await getMeta<WorkOrderState>(db, workOrderKey(checkId))) ?? null) : undefined), [db, checkId]);
  const [error, setError] = useState<string | null>(null);
  const started = useRef(false);
  useEffect(() => {
    // opened straight from an address (no list yet): begin once from today's plan
    if (order === null && !started.current) {
      started.current = true;
      startFit();
    }
  }, [order, startFit]);
  if (!order) return null;
  const { moves } = order;
  const done = moves.map((_, i) => !!order.done[i]);
  const per = (id: string) => {
    const v = views.find((x) => x.valve.id === id);
    return v ? valveLabel(v.valve, v.valve.kind === "intake" ? engine.intakePerCylinder : engine.exhaustPerCylinder) : id;
  };
  const tick = async (i: number) => {
    if (!db) return;
    try {
      await toggleSwap(db, checkId, i);
      setError(null);
    } catch (e) {
      setError(e instanceof Error ? e.message : "The tick could not be saved");
    }
  };
  return (
    <section className="flex flex-col gap-3" aria-label="Fit">
      <h2 ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Swap list, in working order
      </h2>
      <p className="text-ink-soft">Work down the list: only one shim is ever loose in your hand. Lift shims with the magnet; never stack two.</p>
      <ol className="flex flex-col gap-2">
        {moves.map((m, i) => (
          <li key={i}>
            <button type="button" role="checkbox" aria-checked={done[i]} onClick={() => void tick(i)} className={`flex min-h-16 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${done[i] ? "border-ok" : "border-line"}`}>
              <span aria-hidden className="text-2xl">
                {done[i] ? "☑" : "☐"}
              </span>
              <span className="figures text-lg">
                <strong>{i + 1}.</strong> Take the <strong>{m.size.toFixed(2)}</strong> {m.from.kind === "valve" ? `out of ${per(m.from.valveId)}` : `from ${placeWords(m.from)}`} and {m.to.kind === "valve" ? <>fit it to <strong>{per(m.to.valveId)}</strong></> : m.to.kind === "tray" ? "put it on the tray" : "set it aside"}
              </span>
            </button>
          </li>
        ))}
      </ol>
      {error && <Notice tone="error">{error}</Notice>}
      {done.every(Boolean) && <OfferReturned moves={moves} engine={engine} />}
      <Button type="button" disabled={!done.every(Boolean)} onClick={onDone}>
        {done.every(Boolean) ? "Re-measure the changed valves" : "Tick every swap to continue"}
      </Button>
    </section>
  );
}
