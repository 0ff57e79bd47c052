"use client";

import { memo, useEffect, useRef, useState, type MouseEvent } from "react";
import {
  bandSide,
  clearanceFromFeelers,
  compareLengths,
  formatLength,
  fromNm,
  lengthNumber,
  recommendShim,
  sameLength,
  shimNumber,
  toNm,
} from "@/lib/lash";
import { bladeStrip, feelerSet, noGoOf } from "@/lib/check/blades";
import { measuredState, STATE_WORDS, valveLabel, type ValveView } from "@/lib/check/derive";
import { foundWords } from "@/lib/check/rounds";
import type { LocalEngine, LocalReading } from "@/lib/sync/local-db";
import { READING_VALUE_FIELDS } from "@/lib/schemas/records";
import { inputClass } from "@/components/ui/controls";
// loaded with the card, not after it: a strip arriving later grows the card under the mechanic's
// finger and moves the buttons below it, so a tap lands on something else
import { PhotoStrip } from "@/components/photos/photo-strip";
import { parseDecimal } from "@/lib/parse-decimal";

export type ReadingEntry = Pick<
  LocalReading,
  "installedStamp" | "installedMicrometer" | "feelerGo" | "feelerNoGo" | "measured" | "method"
>;

/**
 * One valve: the shim in it (a stepper of one series step, or a micrometer reading), the feeler
 * strip (tap the blade that goes; the next one is taken as the one that will not), and the result
 * at once. Every tap is saved on the phone straight away.
 */
/**
 * A card re-renders only when its own valve's view changes (a tap re-derives every valve's view and
 * reads the engine again, but only one valve changed); onSave is left out of the comparison since it
 * only closes over that view.
 */
export const ValveCard = memo(
  ValveCardBody,
  (a, b) =>
    a.checkId === b.checkId &&
    a.onRecorded === b.onRecorded &&
    a.focusKey === b.focusKey &&
    a.step === b.step &&
    (a.engine === b.engine || JSON.stringify(a.engine) === JSON.stringify(b.engine)) &&
    a.sizes.length === b.sizes.length &&
    a.sizes.every((x, i) => x === b.sizes[i]) &&
    sameView(a.view, b.view),
);

// readings come back from IndexedDB as new objects on every change, so compare their values
/** A length typed on the card (a micrometer's reading, a clearance), with its button. */
function NumberForm({
  label,
  value,
  set,
  onSubmit,
  submit,
}: {
  label: string;
  value: string;
  set: (v: string) => void;
  onSubmit: () => void;
  submit: string;
}) {
  return (
    <form
      className="flex gap-2"
      onSubmit={(e) => {
        e.preventDefault();
        onSubmit();
      }}
    >
      <input
        aria-label={label}
        inputMode="decimal"
        enterKeyHint="done"
        value={value}
        onChange={(e) => set(e.target.value)}
        className={`${inputClass} figures w-32`}
      />
      <button type="submit" className="min-h-12 rounded-xl border-2 border-line px-4 font-bold">
        {submit}
      </button>
    </form>
  );
}

function sameReading(a: LocalReading | undefined, b: LocalReading | undefined) {
  if (!a || !b) return a === b;
  return a.round === b.round && READING_VALUE_FIELDS.every((f) => a[f] === b[f]);
}

function sameView(a: ValveView, b: ValveView) {
  return (
    a.valve.id === b.valve.id &&
    sameReading(a.latest, b.latest) &&
    a.state === b.state &&
    a.installed === b.installed &&
    a.measured === b.measured &&
    a.nextRound === b.nextRound &&
    a.spec.min === b.spec.min &&
    a.spec.max === b.spec.max &&
    a.spec.target === b.spec.target
  );
}

/** what a reading says, in words: the state's glyph and word, and for one out of band the shim it needs */
function resultWords(
  view: ValveView,
  measured: number,
  installed: number,
  sizes: number[],
  unit: LocalEngine["displayUnit"],
): string {
  const state = measuredState(measured, view.spec, view.nextRound);
  const s = STATE_WORDS[state];
  if (state === "in-band") return `${s.glyph} in band`;
  // the double tick is said where it shows, not only in the diagram's key
  if (state === "verified") return `${s.glyph} verified: in band again after the new shim`;
  try {
    const rec = recommendShim({ installed, measured, spec: view.spec, sizes });
    return `${s.glyph} ${s.word} · needs ${formatLength(rec.size, "mm")} (gives ${formatLength(rec.predicted, unit)})`;
  } catch {
    return `${s.glyph} out of band: check the reading`;
  }
}

/**
 * onRecorded hears what a blade or typed value recorded, in words for a live region (the card moves
 * on to the next valve, so its own result line is gone), and whether it came from the keyboard.
 * focusKey: a new number asks the card to take focus (its heading), as when its valve was picked on
 * the diagram.
 */
function ValveCardBody({
  checkId,
  engine,
  view,
  sizes,
  step,
  onSave,
  onRecorded,
  focusKey = 0,
}: {
  checkId: string;
  engine: LocalEngine;
  view: ValveView;
  sizes: number[];
  step: number;
  onSave: (r: ReadingEntry) => Promise<unknown>;
  onRecorded?: (said: string, byKeyboard: boolean) => void;
  focusKey?: number;
}) {
  const heading = useRef<HTMLHeadingElement>(null);
  useEffect(() => {
    if (focusKey > 0) heading.current?.focus();
  }, [focusKey]);
  const unit = engine.displayUnit;
  const r = view.latest && view.latest.round === view.nextRound ? view.latest : undefined;
  const stamp = r?.installedStamp ?? view.installed;
  const micrometer = r?.installedMicrometer ?? null;
  const [typing, setTyping] = useState(false);
  const [typed, setTyped] = useState("");
  const [mic, setMic] = useState(micrometer?.toString() ?? "");
  const set = feelerSet(unit);
  const blades = bladeStrip(set, view.spec);
  const per = view.valve.kind === "intake" ? engine.intakePerCylinder : engine.exhaustPerCylinder;

  const base: ReadingEntry = {
    installedStamp: stamp ?? null,
    installedMicrometer: micrometer,
    feelerGo: r?.feelerGo ?? null,
    feelerNoGo: r?.feelerNoGo ?? null,
    measured: r?.measured ?? null,
    method: r?.method ?? "feeler",
  };
  const save = (patch: Partial<ReadingEntry>) => onSave({ ...base, ...patch });
  const stepShim = (dir: 1 | -1) => {
    const cur = stamp ?? sizes[Math.floor(sizes.length / 2)]!;
    const next = fromNm(toNm(cur) + dir * toNm(step));
    if (compareLengths(next, sizes[0]!) >= 0 && compareLengths(next, sizes.at(-1)!) <= 0)
      void save({ installedStamp: next });
  };
  const said = (interval: string, value: number) => {
    const inside = micrometer ?? stamp;
    return `${view.valve.id}: ${interval}, ${inside != null ? resultWords(view, value, inside, sizes, unit) : "shim not set"}`;
  };
  // a click with no pointer behind it (detail 0) came from Enter or Space
  const tapBlade = (go: number, e: MouseEvent) => {
    const noGo = noGoOf(set, go);
    const c = clearanceFromFeelers({ go, noGo });
    // performance marks: npm run bench times a tap to the reading stored and shown
    const valve = view.valve.id;
    performance.mark("lw:tap", { detail: valve });
    void save({ feelerGo: c.min, feelerNoGo: noGo ?? null, measured: c.value, method: "feeler" }).then(() =>
      performance.mark("lw:stored", { detail: valve }),
    );
    onRecorded?.(
      said(
        foundWords({ measured: c.value, method: "feeler", feelerGo: c.min, feelerNoGo: noGo ?? null }, unit),
        c.value,
      ),
      e.detail === 0,
    );
  };
  const saveTyped = () => {
    const value = parseDecimal(typed);
    if (value == null || !Number.isFinite(value)) return;
    void save({ measured: value, feelerGo: null, feelerNoGo: null, method: "typed" });
    setTyped("");
    onRecorded?.(said(`${formatLength(value, unit)} (typed)`, value), true);
  };
  useEffect(() => {
    performance.mark("lw:shown", { detail: view.valve.id });
  }, [view.valve.id, r?.feelerGo, r?.feelerNoGo]);

  const installed = micrometer ?? stamp;
  const measured = base.measured;
  const result = measured != null && installed != null ? resultWords(view, measured, installed, sizes, unit) : null;
  const interval =
    base.feelerGo != null && base.feelerNoGo != null && base.method === "feeler"
      ? foundWords(base, unit)
      : measured != null
        ? `${formatLength(measured, unit)}${base.method === "typed" ? " (typed)" : ""}`
        : "not measured yet";

  return (
    <article
      id={`valve-${view.valve.id}`}
      data-valve={view.valve.id}
      aria-label={valveLabel(view.valve, per)}
      className="flex flex-col gap-3 rounded-2xl border border-line bg-surface p-3"
    >
      {/* the heading and the band each stay whole: the band goes under the heading when both do not fit */}
      <header className="flex flex-wrap items-baseline justify-between gap-x-2">
        <h3 ref={heading} tabIndex={-1} className="text-xl font-extrabold whitespace-nowrap">
          {valveLabel(view.valve, per)}
        </h3>
        <span className="figures text-sm whitespace-nowrap text-ink-soft">
          band {formatLength(view.spec.min, unit)}–{formatLength(view.spec.max, unit)}
        </span>
      </header>
      <div className="flex flex-wrap items-center gap-2">
        <span className="w-12 text-sm font-bold text-ink-soft">Shim</span>
        <button
          type="button"
          aria-label={`Thinner shim for ${view.valve.id}`}
          onClick={() => stepShim(-1)}
          className="min-h-12 min-w-12 rounded-xl border-2 border-line text-2xl font-bold"
        >
          −
        </button>
        {/* a changed shim is read out where it is shown; an unset one says so in words */}
        <span
          aria-live="polite"
          className={`figures min-w-24 text-center ${stamp != null ? "text-2xl font-extrabold" : "text-base font-bold text-ink-soft"}`}
          data-testid={`shim-${view.valve.id}`}
        >
          {stamp != null ? shimNumber(stamp, step < 0.05) : "not set"}
        </span>
        <button
          type="button"
          aria-label={`Thicker shim for ${view.valve.id}`}
          onClick={() => stepShim(1)}
          className="min-h-12 min-w-12 rounded-xl border-2 border-line text-2xl font-bold"
        >
          +
        </button>
        {stamp != null && <span className="text-sm text-ink-soft">mm</span>}
      </div>
      <details>
        <summary className="min-h-12 cursor-pointer py-3 text-sm font-bold text-ink-soft">
          Micrometer thickness {micrometer != null ? `(${shimNumber(micrometer, true)} mm)` : ""}
        </summary>
        <NumberForm
          label={`Micrometer thickness of ${view.valve.id} in mm`}
          value={mic}
          set={setMic}
          onSubmit={() => void save({ installedMicrometer: parseDecimal(mic) })}
          submit="Use"
        />
      </details>
      <div>
        <p className="mb-1 text-sm font-bold text-ink-soft">Tap the blade that goes ({unit})</p>
        <div
          role="group"
          aria-label={`Feeler blades for ${view.valve.id}`}
          className="grid grid-cols-[repeat(auto-fill,minmax(3rem,1fr))] gap-2"
        >
          {blades.map((b) => {
            const on = base.method === "feeler" && base.feelerGo != null && sameLength(base.feelerGo, b);
            const inBand = bandSide(b, view.spec) === "in-band";
            // the blade's own label (an inch blade without its leading zero, to fit six across)
            const label = unit === "in" ? lengthNumber(b, "in").replace(/^0/, "") : lengthNumber(b, "mm");
            return (
              <button
                key={b}
                type="button"
                aria-pressed={on}
                onClick={(e) => tapBlade(b, e)}
                className={`figures min-h-12 min-w-0 rounded-xl border-2 px-0.5 font-bold ${unit === "in" ? "text-sm" : "text-base"} ${on ? "border-accent bg-accent text-accent-ink" : inBand ? "border-ok" : "border-line"}`}
              >
                {label}
              </button>
            );
          })}
        </div>
        <p className="mt-1 text-xs text-ink-soft">Blades with a green edge lie in the band.</p>
        <button type="button" onClick={() => setTyping((t) => !t)} className="min-h-12 text-sm font-bold underline">
          {typing ? "Hide typed value" : "Type a value instead"}
        </button>
        {typing && (
          <NumberForm
            label={`Typed clearance of ${view.valve.id} in mm`}
            value={typed}
            set={setTyped}
            onSubmit={saveTyped}
            submit="Save"
          />
        )}
      </div>
      {/* on the re-check the card stays after a reading and says the result itself; the measuring
          step moves on to the next valve and says it in its own live region */}
      <p
        className="figures text-base"
        data-testid={`result-${view.valve.id}`}
        aria-live={onRecorded ? undefined : "polite"}
      >
        <span className="text-ink-soft">{interval}</span>
        {result && <strong className="block text-lg">{result}</strong>}
      </p>
      {measured != null && (
        <button
          type="button"
          onClick={() => void save({ feelerGo: null, feelerNoGo: null, measured: null, method: "feeler" })}
          className="min-h-12 self-start text-sm font-bold underline"
        >
          Clear this reading
        </button>
      )}
      <PhotoStrip checkId={checkId} valve={view.valve.id} label={`valve ${view.valve.id}`} />
    </article>
  );
}
