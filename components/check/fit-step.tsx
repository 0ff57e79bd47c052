"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import { useEffect, useRef, useState, type ReactNode } from "react";
import type { ShimMove } from "@/lib/lash";
import { valveLabel, type ValveView } from "@/lib/check/derive";
import { camsOut, camsOutWords, shimNumber } from "@/lib/lash";
import { fitTicks, valvesOfMoves, workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import {
  OVER_BUCKET_CAUTIONS,
  OVER_BUCKET_METHOD,
  SHIM_POSITION_WORDS,
  UNDER_BUCKET_FIT,
} from "@/lib/check/shim-position";
import { getMeta } from "@/lib/sync/later";
import type { LocalEngine } from "@/lib/sync/local-db";
import { offerToClub, toggleFitTask, toggleSwaps } from "@/lib/sync/later";
import { usePool } from "@/components/pool/use-pool";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";
import { ShimPositionAsk } from "./shim-position-ask";

function placeWords(p: ShimMove["from"]) {
  return p.kind === "valve"
    ? p.valveId
    : p.kind === "tray"
      ? "the tray"
      : p.kind === "shop"
        ? "the new (bought) shims"
        : p.kind === "club"
          ? "the borrowed shims"
          : "the side (set aside)";
}

/** One tap: offer the club the shims this check sent back to the tray. */
function OfferReturned({ moves, engine }: { moves: ShimMove[]; engine: LocalEngine }) {
  const { db } = useLocalCore();
  const pool = usePool();
  const [sent, setSent] = useState(false);
  const back = new Map<number, number>();
  for (const m of moves) if (m.to.kind === "tray") back.set(m.size, (back.get(m.size) ?? 0) + 1);
  const club = pool.clubs[0];
  if (!club || back.size === 0) return null;
  const total = [...back.values()].reduce((a, b) => a + b, 0);
  if (sent)
    return (
      <Notice tone="ok">
        ✓ Offered to {club.name}: {total} shim{total === 1 ? "" : "s"}.
      </Notice>
    );
  return (
    <Button
      type="button"
      look="plain"
      onClick={async () => {
        if (!db) return;
        for (const [size, count] of back)
          await offerToClub(db, {
            id: crypto.randomUUID(),
            clubId: club.id,
            size,
            measuredSize: false,
            count,
            shimDiameter: engine.shimDiameter ?? null,
            note: `came out of ${engine.name}`,
          });
        setSent(true);
        void pool.refresh();
      }}
    >
      Offer the {total} shim{total === 1 ? "" : "s"} back on the tray to {club.name}
    </Button>
  );
}

/** Cautions shown beside a task: a glyph and the word, never colour alone. */
function Cautions({ items, label }: { items: string[]; label: string }) {
  return (
    <ul aria-label={label} className="mt-1 flex flex-col gap-1 border-l-4 border-tight pl-3 text-sm">
      {items.map((c) => (
        <li key={c}>
          <span aria-hidden>⚠ </span>
          <strong>Caution:</strong> {c}
        </li>
      ))}
    </ul>
  );
}

function Tick({
  on,
  onClick,
  children,
  testId,
}: {
  on: boolean;
  onClick: () => void;
  children: ReactNode;
  testId?: string;
}) {
  return (
    <button
      type="button"
      role="checkbox"
      aria-checked={on}
      onClick={onClick}
      data-testid={testId}
      className={`flex min-h-16 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${on ? "border-ok" : "border-line"}`}
    >
      <span aria-hidden className="text-2xl">
        {on ? "☑" : "☐"}
      </span>
      <span className="text-lg">{children}</span>
    </button>
  );
}

/**
 * Step 4: the swap list in working order, ticked one by one; the tray follows the ticks. How the
 * shims are reached follows the engine: over the bucket, the method for each valve beside the list;
 * under it, the cams-out sequence as ticks with the swap list at its middle (lib/check/shim-position).
 */
export function FitStep({
  engine,
  views,
  checkId,
  startFit,
  onDone,
  focusHeading = false,
}: {
  engine: LocalEngine;
  views: ValveView[];
  checkId: string;
  startFit: () => void;
  onDone: () => void;
  focusHeading?: boolean;
}) {
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const { db } = useLocalCore();
  // the list kept when fitting began (lib/check/fit), so a reload mid-fit keeps list and ticks
  const order = useLiveQuery(
    async () => (db ? ((await getMeta<WorkOrderState>(db, workOrderKey(checkId))) ?? null) : undefined),
    [db, checkId],
  );
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
  const swapsDone = done.every(Boolean);
  const position = engine.shimPosition;
  const tasks = new Set(order.tasks ?? []);
  const tasksDone = position !== "under" || UNDER_BUCKET_FIT.every((t) => t.key === "swap" || tasks.has(t.key));
  const allDone = swapsDone && tasksDone;
  const per = (id: string) => {
    const v = views.find((x) => x.valve.id === id);
    return v
      ? valveLabel(v.valve, v.valve.kind === "intake" ? engine.intakePerCylinder : engine.exhaustPerCylinder)
      : id;
  };
  const guard = async (f: () => Promise<unknown>) => {
    if (!db) return;
    try {
      await f();
      setError(null);
    } catch (e) {
      setError(e instanceof Error ? e.message : "The tick could not be saved");
    }
  };
  const ticks = fitTicks(moves);
  const tick = (t: number[]) => void guard(() => toggleSwaps(db!, checkId, t));
  const sz = (n: number) => <strong>{shimNumber(n)}</strong>;
  // what goes into the valve: from where the shim is taken
  const fitWords = (m: ShimMove) =>
    m.from.kind === "valve" ? (
      <>
        take the {sz(m.size)} out of {per(m.from.valveId)} and fit it
      </>
    ) : m.from.kind === "tray" ? (
      <>fit a {sz(m.size)} from the tray</>
    ) : m.from.kind === "shop" ? (
      <>fit a new {sz(m.size)} (bought)</>
    ) : m.from.kind === "club" ? (
      <>fit the borrowed {sz(m.size)}</>
    ) : (
      <>fit the {sz(m.size)} set aside</>
    );
  const tickWords = (t: number[]) => {
    const ms = t.map((i) => moves[i]!);
    const last = ms.at(-1)!;
    if (last.to.kind !== "valve")
      return (
        <>
          Take the {sz(last.size)} out of {last.from.kind === "valve" ? per(last.from.valveId) : placeWords(last.from)}{" "}
          and {last.to.kind === "tray" ? "put it on the tray" : "set it aside"}
        </>
      );
    const out = ms.length === 2 ? ms[0]! : null;
    return (
      <>
        <strong>{per(last.to.valveId)}</strong>:{" "}
        {out && (
          <>
            take out its {sz(out.size)} and {out.to.kind === "tray" ? "put it on the tray" : "set it aside"}, then{" "}
          </>
        )}
        {fitWords(last)}
      </>
    );
  };
  const swapList = (
    <ol className="flex flex-col gap-2" aria-label="Swaps, one tick per valve">
      {ticks.map((t, n) => (
        <li
          key={t[0]}
          data-testid="fit-tick"
          data-valve={
            moves[t.at(-1)!]!.to.kind === "valve" ? (moves[t.at(-1)!]!.to as { valveId: string }).valveId : undefined
          }
        >
          <Tick on={t.every((i) => done[i])} onClick={() => tick(t)}>
            <span className="figures">
              <strong>{n + 1}.</strong> {tickWords(t)}
            </span>
          </Tick>
        </li>
      ))}
    </ol>
  );
  const finish = (
    <>
      {error && <Notice tone="error">{error}</Notice>}
      {swapsDone && <OfferReturned moves={moves} engine={engine} />}
      <Button type="button" disabled={!allDone} onClick={onDone}>
        {allDone
          ? "Re-measure the changed valves"
          : position === "under"
            ? "Tick every step and swap to continue"
            : "Tick every swap to continue"}
      </Button>
    </>
  );

  if (position === "under") {
    const cams = camsOut({ shimPosition: "under", valves: valvesOfMoves(moves) });
    return (
      <section className="flex flex-col gap-3" aria-label="Fit">
        <h2 ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
          Fit with the cams out
        </h2>
        <p className="text-lg font-bold" data-testid="cams-out">
          {camsOutWords(cams)}
        </p>
        <p className="text-ink-soft">
          {SHIM_POSITION_WORDS.under.long}. Work down the steps; the manual&apos;s figures and order govern.
        </p>
        <ol className="flex flex-col gap-4" aria-label="Under-bucket fit">
          {UNDER_BUCKET_FIT.map((t, n) => (
            <li key={t.key} data-testid={`task-${t.key}`}>
              {t.key === "swap" ? (
                <div
                  className={`flex flex-col gap-2 rounded-xl border-2 p-3 ${swapsDone ? "border-ok" : "border-line"}`}
                >
                  <h3 className="text-lg font-extrabold">
                    <span aria-hidden>{swapsDone ? "☑ " : "☐ "}</span>
                    {n + 1}. {t.task}: swap list, in working order
                  </h3>
                  <p className="text-ink-soft">Only one shim is ever loose in your hand.</p>
                  {swapList}
                </div>
              ) : (
                <Tick on={tasks.has(t.key)} onClick={() => void guard(() => toggleFitTask(db!, checkId, t.key))}>
                  <strong>{n + 1}.</strong> {t.task}
                </Tick>
              )}
              <Cautions items={t.cautions} label={`Cautions for step ${n + 1}`} />
            </li>
          ))}
        </ol>
        {finish}
      </section>
    );
  }

  return (
    <section className="flex flex-col gap-3" aria-label="Fit">
      <h2 ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Swap list, in working order
      </h2>
      {position === "over" ? (
        <section
          aria-labelledby="over-method"
          className="flex flex-col gap-2 rounded-xl border-2 border-line p-3"
          data-testid="over-method"
        >
          <h3 id="over-method" className="text-lg font-extrabold">
            The cams stay in. For each valve on the list:
          </h3>
          <ol className="flex list-decimal flex-col gap-1 pl-6">
            {OVER_BUCKET_METHOD.map((m) => (
              <li key={m}>{m}</li>
            ))}
          </ol>
          <Cautions items={OVER_BUCKET_CAUTIONS} label="Cautions for each valve" />
        </section>
      ) : (
        <ShimPositionAsk engine={engine} />
      )}
      <p className="text-ink-soft">
        Work down the list: only one shim is ever loose in your hand. Lift shims with the magnet; never stack two.
      </p>
      {swapList}
      {finish}
    </section>
  );
}
