"use client";

import type { EntryStepProps } from "./entry-props";
import { useCallback, useMemo, useState } from "react";
import { useFocusOnShow } from "@/components/ui/focus";
import { measuringOrder, positionWords } from "@/lib/check/measuring";
import type { LocalReading } from "@/lib/sync/local-db";
import { saveReading } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { EngineDiagram } from "./engine-diagram";
import { PositionGuide } from "./position-guide";
import { ValveCard, type ReadingEntry } from "./valve-card";
import { facingOf } from "@/lib/check/diagram";
import { shimNumber } from "@/lib/lash";

/** what a valve's reading was before a tap, so the tap can be undone */
interface Undo {
  valveId: string;
  before: LocalReading | undefined;
}

/**
 * Step 2, the measuring mode: the rotation guide valve by valve. One card at a time, its blade strip
 * centred on the valve's band; a blade tap records and moves on to the next valve still to measure,
 * through the crank positions in order. The diagram shows where you are and picks any valve.
 */
export function MeasureStep(
  props: EntryStepProps & { onTurn: () => void; onDone: () => void; previous: Map<string, number>; checkId: string },
) {
  const { engine, views, sizes, step, save, onTurn, onDone, previous, checkId, focusHeading = false } = props;
  const { db } = useLocalCore();
  const order = useMemo(() => measuringOrder(engine), [engine]);
  const byId = useMemo(() => new Map(views.map((v) => [v.valve.id, v])), [views]);
  const [picked, setPicked] = useState<string | null>(null);
  // which card should take focus: the one picked on the diagram, or the next after a blade chosen
  // with the keyboard (the card that held focus is gone); a touch leaves focus alone
  const [focusCard, setFocusCard] = useState<{ valve: string; n: number } | null>(null);
  const [said, setSaid] = useState("");
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const firstOpen = order.stops.find((s) => byId.get(s.valveId)?.measured == null)?.valveId ?? order.stops[0]?.valveId;
  const currentId = picked ?? firstOpen;
  const current = currentId ? byId.get(currentId) : undefined;
  const position = order.stops.find((s) => s.valveId === currentId)?.position ?? 0;
  const [fill, setFill] = useState(engine.assembledShim ?? sizes[Math.floor(sizes.length / 2)]!);
  const [undo, setUndo] = useState<Undo[]>([]);
  // the one-tap fill is offered on an engine's first check until anything is recorded: the sizes
  // shown before that are only the profile's assembly shim (or nothing), not yet confirmed
  const fresh = views.filter((v) => v.latest === undefined);
  const offerFill = fresh.length === views.length && previous.size === 0;
  const measured = views.filter((v) => v.measured != null).length;
  const fillAll = async () => {
    if (!db) return;
    for (const v of fresh)
      await saveReading(db, checkId, {
        valve: v.valve.id,
        round: 0,
        installedStamp: fill,
        installedMicrometer: null,
        feelerGo: null,
        feelerNoGo: null,
        measured: null,
        method: "feeler",
        fittedShim: null,
      });
  };

  // moves on past the valve just tapped (its new reading is not in these views yet, so it is skipped by place)
  const next = useCallback(
    (words: string, byKeyboard: boolean) => {
      if (!currentId) return;
      const at = order.stops.findIndex((s) => s.valveId === currentId);
      const after = [...order.stops.slice(at + 1), ...order.stops.slice(0, at)];
      const open = after.find((s) => byId.get(s.valveId)?.measured == null);
      const to = open?.valveId ?? currentId;
      setPicked(to);
      // a new crank position is said too: the heading that shows it is not a live region
      const at2 = order.stops.find((s) => s.valveId === to)?.position ?? 0;
      const turn =
        at2 !== position && order.positions[at2]
          ? `. Position ${at2 + 1} of ${order.positions.length}: ${positionWords(order.positions[at2])}`
          : "";
      setSaid(to === currentId ? words : `${words}. Next: ${to}${turn}`);
      setFocusCard((f) => (byKeyboard ? { valve: to, n: (f?.n ?? 0) + 1 } : null));
    },
    [currentId, order, byId, position],
  );
  const pick = useCallback((valve: string) => {
    setPicked(valve);
    setFocusCard((f) => ({ valve, n: (f?.n ?? 0) + 1 }));
  }, []);
  const saveCurrent = useMemo(() => {
    if (!current) return null;
    const write = save(current);
    return async (r: ReadingEntry) => {
      setUndo((u) => [...u.slice(-49), { valveId: current.valve.id, before: current.latest }]);
      await write(r);
    };
  }, [current, save]);
  const undoLast = async () => {
    const last = undo.at(-1);
    if (!db || !last) return;
    setUndo((u) => u.slice(0, -1));
    const v = byId.get(last.valveId);
    const b = last.before;
    await saveReading(db, checkId, {
      valve: last.valveId,
      round: b?.round ?? v?.nextRound ?? 0,
      installedStamp: b?.installedStamp ?? v?.latest?.installedStamp ?? null,
      installedMicrometer: b?.installedMicrometer ?? null,
      feelerGo: b?.feelerGo ?? null,
      feelerNoGo: b?.feelerNoGo ?? null,
      measured: b?.measured ?? null,
      method: b?.method ?? "feeler",
      fittedShim: b?.fittedShim ?? null,
    });
    setPicked(last.valveId);
  };
  const done = measured === views.length;

  return (
    <section className="flex flex-col gap-3" aria-label="Measure">
      {offerFill && (
        <div className="flex flex-wrap items-center gap-2 rounded-xl border-2 border-accent p-3">
          <span className="font-bold">Every bucket has the same shim?</span>
          <select
            aria-label="Shim size for every bucket"
            value={fill}
            onChange={(e) => setFill(Number(e.target.value))}
            className="figures min-h-12 rounded-xl border-2 border-field bg-surface px-2 text-lg"
          >
            {sizes.map((s) => (
              <option key={s} value={s}>
                {shimNumber(s, step < 0.05)} mm
              </option>
            ))}
          </select>
          <Button type="button" onClick={fillAll}>
            Fill all {views.length}
          </Button>
        </div>
      )}
      {order.problem && <Notice tone="error">{order.problem}</Notice>}
      <PositionGuide ref={headingRef} at={position} of={order.positions.length} step={order.positions[position]} />
      {/* what the last blade recorded, read out politely: the card moves on to the next valve */}
      <p role="status" aria-live="polite" className="sr-only" data-testid="measure-said">
        {said}
      </p>
      <div className="flex items-center justify-between gap-2">
        <p className="figures font-bold" data-testid="measured-count">
          {measured} of {views.length} valves measured
        </p>
        <Button
          type="button"
          look="plain"
          className="shrink-0 whitespace-nowrap"
          disabled={undo.length === 0}
          onClick={() => void undoLast()}
        >
          Undo last
        </Button>
      </div>
      {current && saveCurrent && (
        <ValveCard
          key={current.valve.id}
          checkId={checkId}
          engine={engine}
          view={current}
          sizes={sizes}
          step={step}
          onSave={saveCurrent}
          onRecorded={next}
          focusKey={focusCard?.valve === current.valve.id ? focusCard.n : 0}
        />
      )}
      <EngineDiagram views={views} facing={facingOf(engine)} onPick={pick} current={currentId} onTurn={onTurn} />
      <Button type="button" onClick={onDone} disabled={measured === 0} look={done ? "primary" : "plain"}>
        {done ? "All measured: see the shim plan" : "See the shim plan"}
      </Button>
    </section>
  );
}
