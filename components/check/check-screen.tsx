"use client";

import dynamic from "next/dynamic";
import Link from "next/link";
import { useSearchParams } from "next/navigation";
import { useCallback, useEffect, useRef, useState, type ComponentProps } from "react";
import { LashInputError, samePlan, workOrder, type ShimPlan } from "@/lib/lash";
import { checkPlan, DEFAULT_PLAN_OPTIONS, type PlanOptions } from "@/lib/check/derive";
import { poolForEngine, trayForEngine } from "@/lib/check/pool";
import { beginFit, saveEngine, setCheckStatus } from "@/lib/sync/later";
import { usePool } from "@/components/pool/use-pool";
import { useLocalCore } from "@/components/sync/local-provider";
import { Notice } from "@/components/ui/controls";
import { StepBoundary } from "@/components/sync/load-failed";
import { useStored } from "@/components/ui/use-stored";
import type { EntryStepProps } from "./entry-props";
import { MeasureStep } from "./measure-step";
import { PrepareStep } from "./prepare-step";
import { STEPS, stepOfStatus, type Step } from "./steps";
import { useCheckData, useCheckModel, useSaveReading, type CheckData } from "./use-check-data";

// Each step's code loads when the step is shown: the measuring step, where every tap counts, carries
// no table, plan, pool, swap list or review code.
// The plan and the ask for a review below it arrive together: one appearing before the other would
// move the page under a finger.
const PlanStep = dynamic(
  () =>
    Promise.all([import("./plan-step"), import("@/components/review/ask-review")]).then(
      ([{ PlanStep: Plan }, { AskReview }]) => {
        const PlanWithReview = (props: ComponentProps<typeof Plan>) => (
          <>
            <Plan {...props} />
            <AskReview checkId={props.check.id} />
          </>
        );
        return PlanWithReview;
      },
    ),
  { ssr: false },
);
const FitStep = dynamic(() => import("./fit-step").then((m) => m.FitStep), { ssr: false });
const VerifyStep = dynamic(() => import("./verify-step").then((m) => m.VerifyStep), { ssr: false });

/**
 * Once a check is open, the later steps' code is fetched in the background (when the phone is
 * idle), so it is in memory before the garage: a step then opens even if a deploy removed its
 * files from the server and the phone's caches were cleared. Failures are left to the step itself.
 */
function useLaterStepsLoaded() {
  useEffect(() => {
    const load = () =>
      void Promise.all([
        import("./plan-step"),
        import("@/components/review/ask-review"),
        import("./worksheet"),
        import("./fit-step"),
        import("./verify-step"),
      ]).catch(() => undefined);
    if (typeof window.requestIdleCallback === "function") {
      const h = window.requestIdleCallback(load, { timeout: 3000 });
      return () => window.cancelIdleCallback(h);
    }
    const t = setTimeout(load, 1000);
    return () => clearTimeout(t);
  }, []);
}

/** The check page: reads the check's id (and step) from the address and shows that step. */
export function CheckScreen() {
  const params = useSearchParams();
  const id = params.get("id") ?? "";
  // the step is this screen's own state, mirrored into the address for a reload; it does not wait
  // for the router to notice a replaced history entry (which a busy render could leave behind)
  // moved: the step was changed here (not opened from the address), so its heading takes focus
  const [stepOf, setStepOf] = useState<{ id: string; step: Step | undefined; moved?: boolean }>({
    id,
    step: (params.get("step") as Step) ?? undefined,
  });
  const step = stepOf.id === id ? stepOf.step : ((params.get("step") as Step) ?? undefined);
  const data = useCheckData(id);

  if (data === undefined) return null;
  if (data === null)
    return (
      <div className="flex flex-col gap-3">
        <Notice tone="error">This check is not on this phone.</Notice>
        {/* a check another member shared with the club is read as a review, not kept on this phone */}
        <Link
          href={`/review?id=${id}`}
          className="inline-flex min-h-12 items-center justify-center self-start rounded-xl border-2 border-line px-5 text-lg font-bold"
        >
          Open it as a club review
        </Link>
      </div>
    );
  return (
    <CheckBody
      key={id}
      data={data}
      step={step}
      moved={stepOf.id === id && !!stepOf.moved}
      go={(s: Step) => {
        // a step is a view of the same record: change the address without a navigation (no request,
        // so it behaves the same offline)
        setStepOf({ id, step: s, moved: true });
        window.history.replaceState(null, "", `/check?id=${id}&step=${s}`);
        window.scrollTo({ top: 0 });
      }}
    />
  );
}

function CheckBody({ data, step, go, moved }: { data: CheckData; step?: Step; go: (s: Step) => void; moved: boolean }) {
  const { check, engine, readings, tray, previous } = data;
  const { db, user } = useLocalCore();
  useLaterStepsLoaded();
  const current: Step = step ?? stepOfStatus(check.status, readings.length > 0);
  // the club pool is asked for (and the outbox watched for loans) only on the steps that plan with it
  const pool = usePool({ active: current === "plan" || current === "fit" });
  const fit = poolForEngine(engine, pool.offeredToMe, user?.id ?? "");
  const trayFit = trayForEngine(engine, tray);
  // the plan's aim is the mechanic's choice for this engine, kept on this phone
  const [options, setOptions] = useStored<PlanOptions>(`lashwright.plan.${engine.id}`, DEFAULT_PLAN_OPTIONS);
  const { sizes, seriesStep, views } = useCheckModel(data);
  const save = useSaveReading(check.id);
  // which way the engine faces is part of its profile: saved, synced, and the same for the mentor
  const turn = () => db && void saveEngine(db, { ...engine, mirrored: !engine.mirrored });
  let plan: ShimPlan | null = null;
  let planError: string | null = null;
  // whether the other aim gives this very plan, so the screen can say why the choice changes nothing
  let bothAims = false;
  try {
    // the plan is worked out only for the steps that show it: a blade tap on Measure stays cheap
    if (current === "plan" || current === "fit") plan = checkPlan(engine, views, trayFit.usable, fit.pool, options);
    if (plan && current === "plan") {
      const other = checkPlan(engine, views, trayFit.usable, fit.pool, {
        ...options,
        aim: options.aim === "fewest-bought" ? "nearest-target" : "fewest-bought",
      });
      bothAims = !!other && samePlan(plan, other);
    }
  } catch (e) {
    planError = e instanceof LashInputError ? e.message : "The plan could not be worked out";
  }
  // fitting begins from the plan on screen: its swap list is kept with the check on this phone
  const startFit = useCallback(() => {
    if (!db || !plan) return;
    const installed = Object.fromEntries(views.map((v) => [v.valve.id, v.installed ?? 0]));
    void beginFit(db, check.id, workOrder(plan.assignments, installed));
  }, [db, plan, views, check.id]);

  // on a narrow phone the strip of steps scrolls sideways: keep the current one in view
  const currentTab = useRef<HTMLButtonElement>(null);
  // (a block body: scrollIntoView returns a promise in newer browsers, and React would take a
  // returned value for the effect's clean-up and call it)
  useEffect(() => {
    currentTab.current?.scrollIntoView({ block: "nearest", inline: "nearest" });
  }, [current]);
  const later = data.laterClosed;
  // what both steps that take readings are given
  const entry: EntryStepProps = { engine, views, sizes, step: seriesStep, save, focusHeading: moved };

  return (
    <div className="flex flex-col gap-4">
      <nav aria-label="Steps of the check" className="-mx-4 scroll-px-4 overflow-x-auto px-4">
        <ol className="flex gap-1.5">
          {STEPS.map((s, i) => (
            <li key={s.key}>
              <button
                type="button"
                ref={current === s.key ? currentTab : undefined}
                aria-current={current === s.key ? "step" : undefined}
                onClick={() => go(s.key)}
                className={`min-h-12 rounded-xl border-2 px-3 font-bold whitespace-nowrap ${current === s.key ? "border-accent bg-accent text-accent-ink" : "border-line"}`}
              >
                {i + 1}. {s.label}
              </button>
            </li>
          ))}
        </ol>
      </nav>
      <p className="figures text-ink-soft">
        {engine.name} · {check.odometer.toLocaleString("en")} {engine.odometerUnit} · measure{" "}
        {check.measuredHot ? "hot" : "cold"}
      </p>
      {later && check.status !== "closed" && (
        <Notice tone="error">
          A later check of this engine, at {later.odometer.toLocaleString("en")} {engine.odometerUnit}, is already
          closed. This one is older: its readings are not the engine as it is now, so do not fit shims from its plan.
          Close it, or measure again in a new check.
        </Notice>
      )}
      <StepBoundary key={current}>
        {current === "prepare" && (
          <PrepareStep checkId={check.id} engine={engine} onDone={() => go("measure")} focusHeading={moved} />
        )}
        {current === "measure" && (
          <MeasureStep {...entry} onTurn={turn} onDone={() => go("plan")} previous={previous} checkId={check.id} />
        )}
        {current === "plan" && (
          <PlanStep
            engine={engine}
            check={check}
            views={views}
            plan={plan}
            error={planError}
            onTurn={turn}
            onFit={() => {
              startFit();
              go("fit");
            }}
            pool={pool}
            fit={fit}
            options={options}
            setOptions={setOptions}
            bothAims={bothAims}
            trayOtherSystem={trayFit.otherSystem}
            focusHeading={moved}
          />
        )}
        {current === "fit" && (
          <FitStep
            engine={engine}
            views={views}
            checkId={check.id}
            startFit={startFit}
            onDone={() => (db && setCheckStatus(db, check.id, "verifying"), go("verify"))}
            focusHeading={moved}
          />
        )}
        {current === "verify" && <VerifyStep {...entry} check={check} />}
      </StepBoundary>
    </div>
  );
}
