"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import dynamic from "next/dynamic";
import { useMemo, useState } from "react";
import { driftWords, engineHistory } from "@/lib/check/history";
import type { LocalEngine } from "@/lib/sync/local-db";
import { useLocalCore } from "@/components/sync/local-provider";
import { Notice } from "@/components/ui/controls";

// the chart library loads only where a chart is shown
const DriftChart = dynamic(() => import("./drift-chart"), { ssr: false, loading: () => <div className="h-64" /> });

export function History({ engine }: { engine: LocalEngine }) {
  const { db } = useLocalCore();
  const data = useLiveQuery(async () => {
    if (!db) return undefined;
    const checks = await db.checks.where("engineId").equals(engine.id).toArray();
    const readings = await db.readings
      .where("checkId")
      .anyOf(checks.map((c) => c.id))
      .toArray();
    return { checks, readings };
  }, [db, engine.id]);
  const history = useMemo(() => (data ? engineHistory(engine, data.checks, data.readings) : null), [data, engine]);
  const [picked, setPicked] = useState<string | null>(null);
  if (!history) return null;
  const withData = history.valves.filter((v) => v.points.length > 0);
  if (withData.length === 0) return <p className="text-ink-soft">The history fills in as checks are done.</p>;
  const chosen = history.valves.find((v) => v.valveId === (picked ?? history.fastClosing[0] ?? withData[0]!.valveId))!;
  const u = engine.odometerUnit;
  return (
    <section aria-labelledby="history-title" className="flex flex-col gap-3">
      <h2 id="history-title" className="text-xl font-extrabold">
        History and drift
      </h2>
      {history.fastClosing.map((id) => (
        <Notice key={id} tone="error">
          {id} closes much faster than the engine&apos;s other {id.startsWith("E") ? "exhausts" : "intakes"}. That
          points to valve or seat wear: a job for the head, not another shim. Have it looked at.
        </Notice>
      ))}
      <div role="group" aria-label="Valve" className="flex flex-wrap gap-1.5">
        {withData.map((v) => (
          <button
            key={v.valveId}
            type="button"
            aria-pressed={v.valveId === chosen.valveId}
            onClick={() => setPicked(v.valveId)}
            className={`figures min-h-12 min-w-14 rounded-xl border-2 px-2 font-bold ${v.valveId === chosen.valveId ? "border-accent bg-accent text-accent-ink" : history.fastClosing.includes(v.valveId) ? "border-tight" : "border-line"}`}
          >
            {history.fastClosing.includes(v.valveId) ? "⚠ " : ""}
            {v.valveId}
          </button>
        ))}
      </div>
      <div className="rounded-2xl border border-line bg-surface p-2" data-testid="drift-chart">
        {chosen.points.length >= 2 ? (
          <DriftChart h={chosen} unit={u} />
        ) : (
          <p className="p-3 text-ink-soft">One measurement so far: a trend needs three checks.</p>
        )}
      </div>
      <p className="figures text-base" data-testid="drift-words">
        {driftWords(chosen, u)}
      </p>
      <p className="text-sm text-ink-soft">
        A projection from past checks, not a service interval: check when the manual says.
      </p>
    </section>
  );
}
