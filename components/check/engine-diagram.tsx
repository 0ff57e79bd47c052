"use client";

import { useLayoutEffect, useRef, useState, type KeyboardEvent } from "react";
import { STATE_WORDS, type ValveState, type ValveView } from "@/lib/check/derive";
import { CELL_GAP_PX, CELL_PX, diagramRows, GROUP_GAP_PX, type Facing } from "@/lib/check/diagram";

const TONE: Record<ValveState, string> = {
  unmeasured: "border-line text-ink-soft border-dashed bg-surface",
  "in-band": "border-ok text-ok bg-surface",
  verified: "border-ok bg-ok text-bg",
  tight: "border-tight text-tight bg-surface",
  loose: "border-loose text-loose bg-surface",
  fitted: "border-accent text-accent bg-surface",
};

/** the width a phone of 360 px leaves the diagram, until the real width is known */
const FIRST_WIDTH = 300;

/**
 * The engine seen from above (lib/check/diagram.ts: drawingOrder, the order the worksheet and the
 * review draw too): each cylinder one framed group with its label, the side nearest the mechanic at
 * the bottom; cylinder 1 on the left, or on the right for an engine that faces the other way. Each valve a cell of one fixed size with a glyph and its name (the legend gives the words),
 * so no state is told by colour alone and no label can sit over another cylinder's valves.
 */
export function EngineDiagram({
  views,
  facing,
  onPick,
  commentDots,
  current,
  onTurn,
}: {
  views: ValveView[];
  facing: Facing;
  onPick?: (valveId: string) => void;
  commentDots?: Set<string>;
  current?: string;
  onTurn?: () => void;
}) {
  const box = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(FIRST_WIDTH);
  useLayoutEffect(() => {
    const el = box.current;
    if (!el) return;
    const seen = () => setWidth(el.clientWidth || FIRST_WIDTH);
    seen();
    const ro = new ResizeObserver(seen);
    ro.observe(el);
    return () => ro.disconnect();
  }, []);
  const rows = diagramRows(views, facing, width);
  const { mirrored, nearSide } = facing;
  const states = new Set(views.map((v) => v.state));
  // one Tab stop for the whole diagram (the valve last moved to, else the current one): the arrow
  // keys move between valves, so a keyboard does not pass 16 or more cells on every way round
  const [moved, setMoved] = useState<string | null>(null);
  const ids = views.map((v) => v.valve.id);
  const stop = moved && ids.includes(moved) ? moved : current && ids.includes(current) ? current : ids[0];
  const arrows = (e: KeyboardEvent<HTMLDivElement>) => {
    const step =
      e.key === "ArrowRight" || e.key === "ArrowDown" ? 1 : e.key === "ArrowLeft" || e.key === "ArrowUp" ? -1 : 0;
    if (!step && e.key !== "Home" && e.key !== "End") return;
    const cells = [...(box.current?.querySelectorAll<HTMLButtonElement>("button[data-valve]") ?? [])];
    const at = cells.indexOf(document.activeElement as HTMLButtonElement);
    if (at < 0) return;
    const to =
      e.key === "Home" ? 0 : e.key === "End" ? cells.length - 1 : Math.min(cells.length - 1, Math.max(0, at + step));
    e.preventDefault();
    cells[to]!.focus();
    setMoved(cells[to]!.dataset.valve ?? null);
  };
  const cell = (v: ValveView) => {
    const s = STATE_WORDS[v.state];
    const dot = commentDots?.has(v.valve.id);
    const here = current === v.valve.id;
    return (
      <button
        key={v.valve.id}
        type="button"
        onClick={() => {
          setMoved(v.valve.id);
          onPick?.(v.valve.id);
        }}
        tabIndex={v.valve.id === stop ? 0 : -1}
        aria-label={`${v.valve.id} ${s.word}${dot ? ", has comments" : ""}`}
        aria-current={here ? "true" : undefined}
        data-valve={v.valve.id}
        style={{ width: CELL_PX }}
        className={`relative flex h-14 shrink-0 flex-col items-center justify-center rounded-lg border-2 ${TONE[v.state]} ${here ? "outline-4 outline-offset-1 outline-accent" : ""}`}
      >
        <span aria-hidden className="text-base leading-none font-bold">
          {s.glyph}
        </span>
        <span className="figures text-[0.7rem] leading-tight font-bold">{v.valve.id}</span>
        {dot && <span aria-hidden className="absolute top-0.5 right-0.5 h-2.5 w-2.5 rounded-full bg-accent" />}
      </button>
    );
  };
  const line = (vs: ValveView[], side: "top" | "bottom") => (
    <div className="flex justify-center" style={{ gap: CELL_GAP_PX }} data-row={side}>
      {vs.map(cell)}
    </div>
  );
  return (
    <figure aria-label="Engine diagram" className="flex flex-col gap-2 rounded-2xl border border-line bg-surface-2 p-3">
      <figcaption className="text-xs font-bold text-ink-soft">
        {mirrored ? "Cylinder 1 on the right (the engine faces the other way)" : "Cylinder 1 on the left"} ·{" "}
        {nearSide === "exhaust" ? "intakes on top, exhausts nearest you" : "exhausts on top, intakes nearest you"}
        <span className="sr-only"> · the arrow keys move between valves</span>
      </figcaption>
      <div ref={box} onKeyDown={arrows} className="flex flex-col" style={{ gap: GROUP_GAP_PX }}>
        {rows.map((row) => (
          <div key={row[0]!.cylinder} className="flex justify-center" style={{ gap: GROUP_GAP_PX }}>
            {row.map((g) => (
              <div
                key={g.cylinder}
                role="group"
                aria-label={`Cyl ${g.cylinder}`}
                data-cylinder={g.cylinder}
                style={{ gap: CELL_GAP_PX }}
                className="flex flex-col items-stretch rounded-xl border border-line bg-bg/40 p-[4px]"
              >
                {/* the label takes the width of its cells and never widens the group past them */}
                <span
                  className="w-0 min-w-full overflow-hidden text-center text-xs leading-tight font-bold tracking-tight whitespace-nowrap text-ink-soft"
                  data-cylinder-label={g.cylinder}
                >
                  Cyl {g.cylinder}
                </span>
                {line(g.top, "top")}
                {line(g.bottom, "bottom")}
              </div>
            ))}
          </div>
        ))}
      </div>
      <ul aria-label="Key" className="flex flex-wrap gap-x-3 gap-y-1 text-xs text-ink-soft">
        {(Object.keys(STATE_WORDS) as ValveState[])
          .filter((k) => states.has(k))
          .map((k) => (
            <li key={k}>
              <span aria-hidden className="font-bold">
                {STATE_WORDS[k].glyph}
              </span>{" "}
              {STATE_WORDS[k].word}
            </li>
          ))}
      </ul>
      {onTurn && (
        <button
          type="button"
          onClick={onTurn}
          className="min-h-12 self-start text-sm font-bold underline underline-offset-4"
        >
          {mirrored
            ? "Turn the picture: cylinder 1 on the left"
            : "Engine faces the other way? Put cylinder 1 on the right"}
        </button>
      )}
    </figure>
  );
}
