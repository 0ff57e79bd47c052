"use client";

import { STATE_WORDS, type ValveState, type ValveView } from "@/lib/check/derive";

const TONE: Record<ValveState, string> = {
  unmeasured: "border-line text-ink-soft border-dashed",
  "in-band": "border-ok text-ok",
  verified: "border-ok text-ok bg-ok/10",
  tight: "border-tight text-tight",
  loose: "border-loose text-loose",
  fitted: "border-accent text-accent",
};

/**
 * Cylinders side by side as the rider or driver sits, intakes on the top edge and exhausts on the
 * bottom; each valve a cell with a glyph and a word, so no state is told by colour alone.
 */
export function EngineDiagram({ views, mirrored, onMirror, onPick, commentDots }: { views: ValveView[]; mirrored: boolean; onMirror?: (m: boolean) => void; onPick?: (valveId: string) => void; commentDots?: Set<string> }) {
  const cylinders = [...new Set(views.map((v) => v.valve.cylinder))].sort((a, b) => (mirrored ? b - a : a - b));
  const cell = (v: ValveView) => {
    const s = STATE_WORDS[v.state];
    return (
      <button
        key={v.valve.id}
        type="button"
        onClick={() => onPick?.(v.valve.id)}
        aria-label={`${v.valve.id}: ${s.word}`}
        className={`relative flex min-h-14 min-w-0 flex-1 flex-col items-center justify-center rounded-lg border-2 bg-surface px-0.5 ${TONE[v.state]}`}
      >
        <span aria-hidden className="text-base leading-none">
          {s.glyph}
        </span>
        <span className="text-[0.65rem] leading-tight font-bold">{s.word}</span>
        <span className="figures text-[0.6rem] text-ink-soft">{v.valve.id}</span>
        {commentDots?.has(v.valve.id) && <span aria-label="has comments" className="absolute top-0.5 right-0.5 h-2.5 w-2.5 rounded-full bg-accent" />}
      </button>
    );
  };
  return (
    <figure aria-label="Engine diagram" className="flex flex-col gap-2 rounded-2xl border border-line bg-surface-2 p-3">
      <p className="text-xs font-bold tracking-wide text-ink-soft uppercase">Intake side</p>
      <div className="flex gap-2">
        {cylinders.map((c) => (
          <div key={c} className="flex flex-1 gap-1">
            {views.filter((v) => v.valve.cylinder === c && v.valve.kind === "intake").map(cell)}
          </div>
        ))}
      </div>
      <div className="figures flex gap-2 text-center text-sm font-bold text-ink-soft">
        {cylinders.map((c) => (
          <span key={c} className="flex-1">
            Cyl {c}
          </span>
        ))}
      </div>
      <div className="flex gap-2">
        {cylinders.map((c) => (
          <div key={c} className="flex flex-1 gap-1">
            {views.filter((v) => v.valve.cylinder === c && v.valve.kind === "exhaust").map(cell)}
          </div>
        ))}
      </div>
      <p className="text-xs font-bold tracking-wide text-ink-soft uppercase">Exhaust side</p>
      {onMirror && (
        <label className="flex min-h-12 items-center gap-3 text-sm font-bold">
          <input type="checkbox" className="h-6 w-6" checked={mirrored} onChange={(e) => onMirror(e.target.checked)} />
          {mirrored ? "Mirrored: seen from the other side (cylinder 1 on the right)" : "Seen from the seat (cylinder 1 on the left). Mirror it"}
        </label>
      )}
    </figure>
  );
}
