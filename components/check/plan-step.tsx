"use client";

import { useMemo, useState } from "react";
import type { ShimPlan } from "@/lib/lash";
import type { ValveView } from "@/lib/check/derive";
import { checkCsv } from "@/lib/check/csv";
import type { PoolFit } from "@/lib/check/pool";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";
import type { usePool } from "@/components/pool/use-pool";
import { BorrowList } from "@/components/pool/borrow-list";
import { Button, Notice } from "@/components/ui/controls";
import { EngineDiagram } from "./engine-diagram";
import { PlanTable } from "./plan-table";
import { CAUTIONS } from "./steps";

/** Step 3: the diagram, the plan per valve, the buy list, borrowing, what goes back to the tray, print and CSV. */
export function PlanStep({ engine, check, views, plan, error, onTurn, onFit, pool, fit }: { engine: LocalEngine; check: LocalCheck; views: ValveView[]; plan: ShimPlan | null; error: string | null; onTurn: () => void; onFit?: () => void; pool?: ReturnType<typeof usePool>; fit?: PoolFit }) {
  const csv = useMemo(() => {
    if (typeof window === "undefined") return null;
    const date = new Date(check.startedAt).toISOString().slice(0, 10);
    const text = checkCsv({ engine: engine.name, odometer: check.odometer, odometerUnit: engine.odometerUnit, date }, views, plan);
    return { href: `data:text/csv;charset=utf-8,${encodeURIComponent(text)}`, name: `check-${date}-${check.odometer}.csv` };
  }, [engine, check, views, plan]);
  const [copied, setCopied] = useState(false);
  const byId = new Map(views.map((v) => [v.valve.id, v]));
  const buyText = plan?.buy.map((b) => `${b.count} × ${b.size.toFixed(2)} mm shim`).join("\n") ?? "";
  const changing = plan?.assignments.filter((a) => a.source.kind !== "keep").length ?? 0;
  return (
    <section className="flex flex-col gap-4" aria-label="Shim plan">
      <EngineDiagram views={views} mirrored={engine.mirrored} onTurn={onTurn} />
      {error && <Notice tone="error">{error}</Notice>}
      {!plan && !error && <Notice>Measure some valves first: the plan fills in as readings come in.</Notice>}
      {plan && (
        <>
          <PlanTable engine={engine} plan={plan} byId={byId} lenders={pool ? new Map(pool.offers.map((o) => [o.ownerId, o.ownerName])) : undefined} />
          <section aria-labelledby="buy-title" className="rounded-2xl border border-line bg-surface p-4">
            <h2 id="buy-title" className="text-xl font-extrabold">
              Buy list
            </h2>
            {plan.buy.length === 0 ? (
              <p className="text-ok font-bold">✓ Nothing to buy: swaps and the tray cover every change.</p>
            ) : (
              <>
                <ul className="figures text-lg" data-testid="buy-list">
                  {plan.buy.map((b) => (
                    <li key={b.size}>
                      {b.count} × {b.size.toFixed(2)} mm
                    </li>
                  ))}
                </ul>
                <Button
                  type="button"
                  look="plain"
                  className="mt-2 print:hidden"
                  onClick={() => navigator.clipboard?.writeText(`Shims for ${engine.name}${engine.shimDiameter ? ` (${engine.shimDiameter} mm diameter)` : ""}:\n${buyText}`).then(() => setCopied(true), () => setCopied(false))}
                >
                  {copied ? "✓ Copied" : "Copy as text"}
                </Button>
              </>
            )}
          </section>
          {pool && fit && <BorrowList plan={plan} pool={pool} fit={fit} checkId={check.id} />}
          <section aria-labelledby="tray-title" className="rounded-2xl border border-line bg-surface p-4">
            <h2 id="tray-title" className="text-xl font-extrabold">
              Back to the tray
            </h2>
            {plan.toTray.length === 0 ? <p className="text-ink-soft">Nothing: every shim that comes out is used again.</p> : <p className="figures text-lg">{plan.toTray.map((t) => `${t.count} × ${t.size.toFixed(2)} mm`).join(", ")}</p>}
          </section>
          <div className="flex flex-wrap gap-2 print:hidden">
            <Button type="button" look="plain" onClick={() => window.print()}>
              Print worksheet
            </Button>
            {csv && (
              <a href={csv.href} download={csv.name} className="inline-flex min-h-12 items-center justify-center rounded-xl border-2 border-line px-5 text-lg font-bold">
                Download CSV
              </a>
            )}
          </div>
          <section className="hidden print:block">
            <h2 className="text-lg font-bold">Cautions</h2>
            <ul className="list-disc pl-5">
              {CAUTIONS.map((c) => (
                <li key={c}>{c}</li>
              ))}
            </ul>
          </section>
          {onFit && changing > 0 && (
            <Button type="button" onClick={onFit}>
              Fit the {changing} change{changing === 1 ? "" : "s"}
            </Button>
          )}
          {changing === 0 && plan.assignments.length === views.length && <Notice tone="ok">Every valve is in its band. Nothing to change.</Notice>}
        </>
      )}
    </section>
  );
}
