"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useSearchParams } from "next/navigation";
import { useMemo } from "react";
import { formatLength } from "@/lib/lash";
import { checkPlan, valveViews } from "@/lib/check/derive";
import { VERDICTS, type Verdict } from "@/lib/check/verdicts";
import { fetchers, mutations, queryKeys } from "@/lib/api/client";
import type { LocalEngine, LocalReading } from "@/lib/sync/local-db";
import { EngineDiagram } from "@/components/check/engine-diagram";
import { PlanTable } from "@/components/check/plan-table";
import { Notice } from "@/components/ui/controls";
import { CommentThread } from "./comment-thread";

/**
 * A mentor's view of a shared check: read-only readings with how each was found, the diagram, the
 * plan, the comments, and the verdict. Nothing here can change a reading.
 */
export function ReviewScreen() {
  const id = useSearchParams().get("id") ?? "";
  const qc = useQueryClient();
  const check = useQuery({ queryKey: queryKeys.check(id), queryFn: () => fetchers.check(id), retry: false });
  const readings = useQuery({ queryKey: queryKeys.readings(id), queryFn: () => fetchers.readings(id), enabled: check.isSuccess });
  const comments = useQuery({ queryKey: queryKeys.comments(id), queryFn: () => fetchers.comments(id), enabled: check.isSuccess });
  const shares = useQuery({ queryKey: queryKeys.shares(id), queryFn: () => fetchers.shares(id), enabled: check.isSuccess });
  const engine = check.data?.engine as unknown as LocalEngine | undefined;
  const views = useMemo(() => (engine && readings.data ? valveViews(engine, readings.data as unknown as LocalReading[], () => null) : null), [engine, readings.data]);
  const plan = useMemo(() => {
    try {
      return engine && views ? checkPlan(engine, views, []) : null;
    } catch {
      return null;
    }
  }, [engine, views]);
  const addComment = useMutation({ mutationFn: (v: { body: string; valve: string | null }) => mutations.comment(id, v.body, v.valve), onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.comments(id) }) });
  const verdict = useMutation({ mutationFn: (v: { shareId: string; verdict: Verdict }) => mutations.verdict(v.shareId, v.verdict), onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.shares(id) }) });

  if (check.isPending) return <p className="text-ink-soft">Loading the check…</p>;
  if (check.isError) return <Notice tone="error">{check.error.message}. Reviews need a signal.</Notice>;
  if (!engine || !views) return null;
  const share = shares.data?.find((s) => !s.withdrawnAt);
  const unit = engine.displayUnit;
  const dots = new Set((comments.data ?? []).map((c) => c.valve).filter((v): v is string => !!v));
  const isMentor = check.data.access === "mentor";
  return (
    <div className="flex flex-col gap-5">
      <p className="figures text-ink-soft">
        {engine.name} · {check.data.check.odometer.toLocaleString("en")} {engine.odometerUnit} · {isMentor ? "read-only: you are reviewing" : "your check"}
      </p>
      <EngineDiagram views={views} mirrored={engine.mirrored} commentDots={dots} />
      <section aria-labelledby="readings-title" className="flex flex-col gap-2">
        <h2 id="readings-title" className="text-xl font-extrabold">
          Readings and how they were found
        </h2>
        <ul className="figures flex flex-col gap-1 text-base">
          {views.map((v) => {
            const r = v.latest;
            const how = !r || r.measured == null ? "not measured" : r.method === "typed" ? `${formatLength(r.measured, unit)} typed` : `${formatLength(r.feelerGo ?? r.measured, unit)} goes${r.feelerNoGo != null ? `, ${formatLength(r.feelerNoGo, unit)} does not` : ""}`;
            const shim = r?.installedMicrometer != null ? `${r.installedMicrometer.toFixed(3)} micrometer` : r?.installedStamp != null ? `${r.installedStamp.toFixed(2)} stamp` : "shim ?";
            return (
              <li key={v.valve.id} className="flex justify-between gap-2 border-b border-line py-1">
                <strong>{v.valve.id}</strong>
                <span className="text-right">
                  {shim} · {how}
                  {r && r.round > 0 ? ` (re-check ${r.round})` : ""}
                </span>
              </li>
            );
          })}
        </ul>
      </section>
      {plan && <PlanTable engine={engine} plan={plan} byId={new Map(views.map((v) => [v.valve.id, v]))} />}
      <section aria-labelledby="verdict-title" className="flex flex-col gap-2 rounded-2xl border-2 border-accent p-4">
        <h2 id="verdict-title" className="text-xl font-extrabold">
          Verdict
        </h2>
        <p data-testid="verdict">{share?.verdict ? `${VERDICTS[share.verdict].glyph} ${VERDICTS[share.verdict].word}` : "No verdict yet."}</p>
        {isMentor && share && (
          <div className="flex flex-col gap-2">
            {(Object.keys(VERDICTS) as Verdict[]).map((k) => (
              <button key={k} type="button" aria-pressed={share.verdict === k} onClick={() => verdict.mutate({ shareId: share.id, verdict: k })} className={`min-h-14 rounded-xl border-2 px-4 text-left text-lg font-bold ${share.verdict === k ? "border-accent bg-accent text-accent-ink" : "border-line"}`}>
                {VERDICTS[k].glyph} {VERDICTS[k].word}
              </button>
            ))}
          </div>
        )}
      </section>
      <CommentThread comments={comments.data ?? []} valves={views.map((v) => v.valve.id)} onAdd={async (body, valve) => void (await addComment.mutateAsync({ body, valve }))} busy={addComment.isPending} />
    </div>
  );
}
