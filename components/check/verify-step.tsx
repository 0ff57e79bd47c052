"use client";

import type { EntryStepProps } from "./entry-props";
import { useQuery } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useLiveQuery } from "@/components/sync/use-live-query";
import { useMemo, useState, type ReactNode } from "react";
import { measuringOrder } from "@/lib/check/measuring";
import { workOrderKey, type WorkOrderState } from "@/lib/check/fit";
import { RECHECK_TURN, RECHECK_TURN_CAUTION } from "@/lib/check/shim-position";
import { fetchers, queryKeys } from "@/lib/api/client";
import { VERDICTS } from "@/lib/check/verdicts";
import { openValves, recheckValves, type ValveView } from "@/lib/check/derive";
import { getMeta } from "@/lib/sync/later";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";
import { saveCheck, setTurned } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";
import { ValveCard } from "./valve-card";
import { PositionGuide } from "./position-guide";

const valves = (n: number) => `${n} valve${n === 1 ? "" : "s"}`;

/** What is still open, in the order the mechanic deals with it: re-measure first, then what is out of band. */
function openWords(open: ValveView[]) {
  const waiting = open.filter((v) => v.state === "fitted").length;
  const out = open.filter((v) => v.state === "tight" || v.state === "loose").length;
  const never = open.filter((v) => v.state === "unmeasured").length;
  const parts = [
    waiting && `${valves(waiting)} to re-measure`,
    out && `${valves(out)} out of band: plan again, or close the check with them noted`,
    never && `${valves(never)} never measured`,
  ].filter(Boolean);
  return `${parts.join("; ")}.`;
}

/**
 * The changed valves in the order the crank turns, as Measure takes them: one group per position of
 * the rotation guide that has a changed valve, headed by the same guide (turn to where, and which of
 * the changed valves to measure there), numbered among the positions this re-check needs.
 */
function ByPosition({
  engine,
  changed,
  render,
}: {
  engine: LocalEngine;
  changed: ValveView[];
  render: (v: ValveView) => ReactNode;
}) {
  const order = useMemo(() => measuringOrder(engine), [engine]);
  const byId = new Map(changed.map((v) => [v.valve.id, v]));
  const groups = order.positions
    .map((p, position) => ({
      p,
      views: order.stops.filter((s) => s.position === position && byId.has(s.valveId)).map((s) => byId.get(s.valveId)!),
    }))
    .filter((g) => g.views.length > 0);
  if (order.positions.length === 0) return <>{changed.map(render)}</>;
  return (
    <>
      {groups.map((g, n) => {
        // the guide's words name only the changed valves at this position
        const here = new Set(g.views.map((v) => `${v.valve.kind}${v.valve.cylinder}`));
        const step = { ...g.p, valves: g.p.valves.filter((r) => here.has(`${r.kind}${r.cylinder}`)) };
        return (
          <section
            key={g.p.crankAngle}
            aria-label={`Position ${n + 1} of ${groups.length}`}
            data-testid="recheck-position"
            className="flex flex-col gap-3"
          >
            <PositionGuide at={n} of={groups.length} step={step} level={3} />
            {g.views.map(render)}
          </section>
        );
      })}
    </>
  );
}

/** Step 5: re-measure the valves of this fit until all are in band, or close with the open ones noted. */
export function VerifyStep(props: EntryStepProps & { check: LocalCheck }) {
  const { engine, views, sizes, step, save, check, focusHeading = false } = props;
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const { db } = useLocalCore();
  const router = useRouter();
  const changed = recheckValves(views);
  const open = openValves(views);
  const order = useLiveQuery(
    async () => (db ? ((await getMeta<WorkOrderState>(db, workOrderKey(check.id))) ?? null) : undefined),
    [db, check.id],
  );
  // after an under-bucket fit the cams went back in: two crank turns by hand and the marks checked
  // again come before the first reading of the re-check (common practice; from memory)
  const readingStarted = changed.some((v) => v.state !== "fitted");
  const mustTurn =
    engine.shimPosition === "under" && !!order && order.moves.length > 0 && !order.turned && !readingStarted;
  // a mentor who said "measure again" or "stop and ask" is named before the check is closed over it
  const shares = useQuery({
    queryKey: queryKeys.shares(check.id),
    queryFn: () => fetchers.shares(check.id),
    retry: false,
  });
  const held = (shares.data ?? []).find((s) => !s.withdrawnAt && s.verdict && s.verdict !== "close-up");
  const [asking, setAsking] = useState(false);
  const close = async () => {
    if (!db) return;
    if (held && !asking) return setAsking(true);
    const note = open.length
      ? `Closed with ${open.map((v) => `${v.valve.id} (${v.state})`).join(", ")} still open.`
      : check.notes;
    await saveCheck(db, { ...check, status: "closed", notes: note ?? null });
    router.push(`/engine?id=${engine.id}`);
  };
  return (
    <section className="flex flex-col gap-3" aria-label="Re-check">
      <h2 ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Measure the changed valves again
      </h2>
      {changed.length === 0 && <Notice>No valve has been changed in this check.</Notice>}
      {engine.shimPosition === "under" && order && order.moves.length > 0 && !readingStarted && (
        <div data-testid="recheck-turn" className="flex flex-col gap-1">
          <button
            type="button"
            role="checkbox"
            aria-checked={!!order.turned}
            onClick={() => db && void setTurned(db, check.id, !order.turned)}
            className={`flex min-h-16 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${order.turned ? "border-ok" : "border-tight"}`}
          >
            <span aria-hidden className="text-2xl">
              {order.turned ? "☑" : "☐"}
            </span>
            <span className="text-lg font-bold">{RECHECK_TURN}</span>
          </button>
          <p className="border-l-4 border-tight pl-3 text-sm">
            <span aria-hidden>⚠ </span>
            <strong>Caution:</strong> {RECHECK_TURN_CAUTION}
          </p>
        </div>
      )}
      {engine.shimPosition === "under" && order === undefined ? null : mustTurn ? (
        <Notice>Tick the two-turn check first: the valves to measure again show once it is done.</Notice>
      ) : (
        <ByPosition
          engine={engine}
          changed={changed}
          render={(v) => (
            <ValveCard
              key={v.valve.id}
              checkId={check.id}
              engine={engine}
              view={v}
              sizes={sizes}
              step={step}
              onSave={save(v)}
            />
          )}
        />
      )}
      {open.length === 0 ? (
        <Notice tone="ok">✓ Every valve is in its band.</Notice>
      ) : (
        <Notice>{openWords(open)}</Notice>
      )}
      {asking && held?.verdict ? (
        <div
          role="alertdialog"
          aria-labelledby="close-ask"
          className="flex flex-col gap-2 rounded-2xl border-2 border-tight p-3"
        >
          <p id="close-ask" className="font-bold">
            The club&apos;s verdict on this check is “{VERDICTS[held.verdict].glyph} {VERDICTS[held.verdict].word}”.
            Close it anyway?
          </p>
          <div className="flex flex-wrap gap-2">
            <Button type="button" look="plain" onClick={() => setAsking(false)}>
              Keep it open
            </Button>
            <Button type="button" onClick={close}>
              Close anyway
            </Button>
          </div>
        </div>
      ) : (
        <Button
          type="button"
          onClick={close}
          look={open.length ? "plain" : "primary"}
          disabled={shares.isPending && shares.fetchStatus === "fetching"}
        >
          {open.length ? "Close the check with open items noted" : "Close the check"}
        </Button>
      )}
    </section>
  );
}
