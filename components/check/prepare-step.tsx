"use client";

import { Button } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";
import { useStored } from "@/components/ui/use-stored";
import { CAUTIONS } from "./steps";

const NONE_TICKED: boolean[] = [];

/** Step 1: the cautions as a tick list; measuring starts when all are ticked. */
export function PrepareStep({ checkId, onDone, focusHeading = false }: { checkId: string; onDone: () => void; focusHeading?: boolean }) {
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const [ticked, setTicked] = useStored<boolean[]>(`lashwright.cautions.${checkId}`, NONE_TICKED);
  const toggle = (i: number) => setTicked(CAUTIONS.map((_, j) => (j === i ? !ticked[j] : !!ticked[j])));
  return (
    <section aria-labelledby="prepare-title" className="flex flex-col gap-3">
      <h2 id="prepare-title" ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Before you start
      </h2>
      <ul className="flex flex-col gap-2">
        {CAUTIONS.map((c, i) => (
          <li key={c}>
            <button type="button" role="checkbox" aria-checked={!!ticked[i]} onClick={() => toggle(i)} className={`flex min-h-14 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${ticked[i] ? "border-ok" : "border-line"}`}>
              <span aria-hidden className="text-2xl">
                {ticked[i] ? "☑" : "☐"}
              </span>
              <span className="font-bold">{c}</span>
            </button>
          </li>
        ))}
      </ul>
      <p className="text-sm text-ink-soft">Lashwright&apos;s numbers are a calculation aid, not a specification: the service manual and a qualified mechanic have the last word.</p>
      <Button type="button" disabled={!CAUTIONS.every((_, i) => ticked[i])} onClick={onDone}>
        {CAUTIONS.every((_, i) => ticked[i]) ? "Start measuring" : `Tick all ${CAUTIONS.length} to start`}
      </Button>
    </section>
  );
}
