"use client";

import dynamic from "next/dynamic";
import { useState } from "react";
import { camsOut, camsOutWords, formatLength, shimNumber, type LengthUnit, type ShimPlan } from "@/lib/lash";
import { SHIM_POSITION_WORDS } from "@/lib/check/shim-position";
import type { PlanOptions, ValveView } from "@/lib/check/derive";
import type { PoolFit } from "@/lib/check/pool";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";
import type { usePool } from "@/components/pool/use-pool";
import { BorrowList } from "@/components/pool/borrow-list";
import { Button, Notice, TitledSection } from "@/components/ui/controls";
import { useFocusOnShow } from "@/components/ui/focus";
import { EngineDiagram } from "./engine-diagram";
import { PlanChanges, PlanTable } from "./plan-table";
import { CsvDownload } from "./csv-download";
import { ShimPositionAsk } from "./shim-position-ask";
import { facingOf } from "@/lib/check/diagram";

// the printed worksheet loads with the plan, the step that prints
const Worksheet = dynamic(() => import("./worksheet"), { ssr: false });

/** Step 3: the diagram, the plan per valve, the buy list, borrowing, what goes back to the tray, print and CSV. */
export function PlanStep({
  engine,
  check,
  views,
  plan,
  error,
  onTurn,
  onFit,
  pool,
  fit,
  options,
  setOptions,
  bothAims = false,
  trayOtherSystem = 0,
  focusHeading = false,
}: {
  engine: LocalEngine;
  check: LocalCheck;
  views: ValveView[];
  plan: ShimPlan | null;
  error: string | null;
  onTurn: () => void;
  onFit?: () => void;
  pool?: ReturnType<typeof usePool>;
  fit?: PoolFit;
  options?: PlanOptions;
  setOptions?: (o: PlanOptions) => void;
  bothAims?: boolean;
  trayOtherSystem?: number;
  focusHeading?: boolean;
}) {
  const [copied, setCopied] = useState(false);
  const headingRef = useFocusOnShow<HTMLHeadingElement>(focusHeading);
  const byId = new Map(views.map((v) => [v.valve.id, v]));
  const lenders = pool ? new Map(pool.offers.map((o) => [o.ownerId, o.ownerName])) : undefined;
  const buyText = plan?.buy.map((b) => `${b.count} × ${shimNumber(b.size)} mm shim`).join("\n") ?? "";
  const changing = plan?.assignments.filter((a) => a.source.kind !== "keep").length ?? 0;
  return (
    <section className="flex flex-col gap-4" aria-labelledby="plan-title">
      <h2 id="plan-title" ref={headingRef} tabIndex={-1} className="text-2xl font-extrabold">
        Shim plan
      </h2>
      <Worksheet engine={engine} check={check} views={views} plan={plan} lenders={lenders} />
      <EngineDiagram views={views} facing={facingOf(engine)} onTurn={onTurn} />
      {options && setOptions && (
        <PlanAimChoice
          options={options}
          setOptions={setOptions}
          unit={engine.displayUnit}
          bothAims={!!plan && bothAims}
          plan={plan}
        />
      )}
      {error && <Notice tone="error">{error}</Notice>}
      {trayOtherSystem > 0 && (
        <Notice>
          {trayOtherSystem} shim{trayOtherSystem === 1 ? "" : "s"} on the tray {trayOtherSystem === 1 ? "is" : "are"}{" "}
          for another shim diameter and {trayOtherSystem === 1 ? "is" : "are"} left out of this plan (the engine takes{" "}
          {engine.shimDiameter} mm).
        </Notice>
      )}
      {!plan && !error && <Notice>Measure some valves first: the plan fills in as readings come in.</Notice>}
      {plan && (
        <>
          <PlanChanges plan={plan} byId={byId} lenders={lenders} />
          <PlanTable engine={engine} plan={plan} byId={byId} lenders={lenders} />
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
                      {b.count} × {shimNumber(b.size)} mm
                    </li>
                  ))}
                </ul>
                <Button
                  type="button"
                  look="plain"
                  className="mt-2 print:hidden"
                  onClick={() =>
                    navigator.clipboard
                      ?.writeText(
                        `Shims for ${engine.name}${engine.shimDiameter ? ` (${engine.shimDiameter} mm diameter)` : ""}:\n${buyText}`,
                      )
                      .then(
                        () => setCopied(true),
                        () => setCopied(false),
                      )
                  }
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
            {plan.toTray.length === 0 ? (
              <p className="text-ink-soft">Nothing: every shim that comes out is used again.</p>
            ) : (
              <p className="figures text-lg">
                {plan.toTray.map((t) => `${t.count} × ${shimNumber(t.size)} mm`).join(", ")}
              </p>
            )}
          </section>
          <div className="flex flex-wrap gap-2 print:hidden">
            <Button type="button" look="plain" onClick={() => window.print()}>
              Print worksheet
            </Button>
            <CsvDownload engine={engine} check={check} views={views} plan={plan} />
          </div>
          {changing > 0 && <CamsLine engine={engine} plan={plan} />}
          {onFit && changing > 0 && (
            <Button type="button" onClick={onFit}>
              Fit the {changing} change{changing === 1 ? "" : "s"}
            </Button>
          )}
          {changing === 0 && plan.assignments.length === views.length && (
            <Notice tone="ok">Every valve is in its band. Nothing to change.</Notice>
          )}
        </>
      )}
    </section>
  );
}

/** Before fitting starts: which cams come out (shims under the buckets), or that they stay in. */
function CamsLine({ engine, plan }: { engine: LocalEngine; plan: ShimPlan }) {
  if (!engine.shimPosition) return <ShimPositionAsk engine={engine} />;
  const valves = plan.assignments.filter((a) => a.source.kind !== "keep").map((a) => a.valveId);
  return (
    <TitledSection
      titleId="cams-title"
      title={SHIM_POSITION_WORDS[engine.shimPosition].short}
      titleClass="text-xl font-extrabold"
      className="rounded-2xl border-2 border-line bg-surface p-4"
      testId="plan-cams-out"
    >
      <p className="text-lg font-bold">
        {engine.shimPosition === "under"
          ? camsOutWords(camsOut({ shimPosition: "under", valves }))
          : "Cams stay in: each shim comes out over its bucket with the bucket tool."}
      </p>
      {engine.shimPosition === "under" && (
        <p className="text-ink-soft">
          The cams go back in time with the marks aligned; the Fit step takes you through it.
        </p>
      )}
    </TitledSection>
  );
}

const MARGINS = [0, 0.01, 0.02, 0.03, 0.05];

/** Why the two aims agree, from what the plan needs: the plan is the best by both orders at once. */
function bothAimsWords(plan: ShimPlan | null): string {
  const fetched = plan ? plan.buy.length + plan.borrow.length : 0;
  return fetched === 0
    ? "Both aims give this plan: it buys and borrows nothing, and no other choice of shims lands nearer the target."
    : "Both aims give this plan: no other choice of shims lands nearer the target, and none needs fewer shims bought or lenders asked.";
}

/** How the plan chooses: buy the fewest shims or land nearest the target, and how far to keep from the tight edge. */
function PlanAimChoice({
  options,
  setOptions,
  unit,
  bothAims,
  plan,
}: {
  options: PlanOptions;
  setOptions: (o: PlanOptions) => void;
  unit: LengthUnit;
  bothAims: boolean;
  plan: ShimPlan | null;
}) {
  return (
    <fieldset className="flex flex-col gap-2 rounded-2xl border border-line bg-surface p-3 print:hidden">
      <legend className="px-1 font-extrabold">The plan aims to</legend>
      <div className="grid grid-cols-2 gap-2">
        {(
          [
            ["fewest-bought", "Fewest to buy or fetch"],
            ["nearest-target", "Land nearest the target"],
          ] as const
        ).map(([aim, label]) => (
          <label
            key={aim}
            className={`flex min-h-12 items-center gap-2 rounded-xl border-2 px-2 font-bold ${options.aim === aim ? "border-accent" : "border-line"}`}
          >
            <input
              type="radio"
              name="plan-aim"
              className="h-5 w-5"
              checked={options.aim === aim}
              onChange={() => setOptions({ ...options, aim })}
            />
            {label}
          </label>
        ))}
      </div>
      {/* a lender is a trip (to collect and to give back), so borrowing is not free */}
      <p className="text-sm text-ink-soft">
        Each lender to ask counts as one trip, like one shim bought; when two plans are even, the one with fewer lenders
        is chosen.
      </p>
      {bothAims && (
        <p className="text-sm font-bold" data-testid="both-aims">
          {bothAimsWords(plan)}
        </p>
      )}
      <label className="flex flex-wrap items-center gap-2 text-sm font-bold">
        Keep new shims clear of the tight edge by
        <select
          value={options.tightMargin}
          onChange={(e) => setOptions({ ...options, tightMargin: Number(e.target.value) })}
          className="figures min-h-12 rounded-xl border-2 border-field bg-surface px-2 text-base"
        >
          {MARGINS.map((m) => (
            <option key={m} value={m}>
              {m === 0 ? "nothing" : formatLength(m, unit)}
            </option>
          ))}
        </select>
      </label>
    </fieldset>
  );
}
