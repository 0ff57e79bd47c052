"use client";

import { prepareCautions, shimPositionWords } from "@/lib/check/shim-position";
import type { LocalEngine } from "@/lib/sync/local-db";
import { Button } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";
import { useStored } from "@/components/ui/use-stored";
import { ShimPositionAsk } from "./shim-position-ask";

const NONE_TICKED: boolean[] = [];

/** Step 1: the cautions as a tick list, as the engine is built; measuring starts when all are ticked. */
export function PrepareStep({
  checkId,
  engine,
  onDone,
  focusHeading = false,
}: {
  checkId: string;
  engine: LocalEngine;
  onDone: () => void;
  focusHeading?: boolean;
}) {
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const position = engine.shimPosition;
  const cautions = prepareCautions(position);
  // the ticks belong to one list: a different list (the engine's kind said) starts unticked
  const [ticked, setTicked] = useStored<boolean[]>(
    position ? `lashwright.cautions.${checkId}.${position}` : `lashwright.cautions.${checkId}`,
    NONE_TICKED,
  );
  const toggle = (i: number) => setTicked(cautions.map((_, j) => (j === i ? !ticked[j] : !!ticked[j])));
  const all = cautions.every((_, i) => ticked[i]);
  return (
    <section aria-labelledby="prepare-title" className="flex flex-col gap-3">
      <h2 id="prepare-title" ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Before you start
      </h2>
      {position ? <p className="font-bold">{shimPositionWords(position)}</p> : <ShimPositionAsk engine={engine} />}
      <ul className="flex flex-col gap-2">
        {cautions.map((c, i) => (
          <li key={c}>
            <button
              type="button"
              role="checkbox"
              aria-checked={!!ticked[i]}
              onClick={() => toggle(i)}
              className={`flex min-h-14 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${ticked[i] ? "border-ok" : "border-line"}`}
            >
              <span aria-hidden className="text-2xl">
                {ticked[i] ? "☑" : "☐"}
              </span>
              <span className="font-bold">{c}</span>
            </button>
          </li>
        ))}
      </ul>
      <p className="text-sm text-ink-soft">
        Lashwright&apos;s numbers are a calculation aid, not a specification: the service manual and a qualified
        mechanic have the last word.
      </p>
      <Button type="button" disabled={!all} onClick={onDone}>
        {all ? "Start measuring" : `Tick all ${cautions.length} to start`}
      </Button>
    </section>
  );
}
