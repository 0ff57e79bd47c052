"use client";

import { useLiveQuery } from "dexie-react-hooks";
import { useRouter, useSearchParams } from "next/navigation";
import { useMemo, useState } from "react";
import { LashInputError, rotationGuide, workOrder, type ShimMove, type ShimPlan } from "@/lib/lash";
import { checkPlan, engineSizes, valveLabel, valveViews, type ValveView } from "@/lib/check/derive";
import { checkCsv } from "@/lib/check/csv";
import { poolForEngine, type PoolFit } from "@/lib/check/pool";
import { usePool } from "@/components/pool/use-pool";
import { BorrowList } from "@/components/pool/borrow-list";
import { PlanTable } from "./plan-table";
import { AskReview } from "@/components/review/ask-review";
import type { LocalCheck, LocalEngine, LocalReading } from "@/lib/sync/local-db";
import { adjustTray, offerToClub, saveReading, setCheckStatus } from "@/lib/sync/writes";
import { useLocal } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { useStored } from "@/components/ui/use-stored";
import { EngineDiagram } from "./engine-diagram";
import { ValveCard, type ReadingEntry } from "./valve-card";

const STEPS = [
  { key: "prepare", label: "Prepare" },
  { key: "measure", label: "Measure" },
  { key: "plan", label: "Plan" },
  { key: "fit", label: "Fit" },
  { key: "verify", label: "Re-check" },
] as const;
type Step = (typeof STEPS)[number]["key"];

const NONE_TICKED: boolean[] = [];

const CAUTIONS = [
  "Engine cold (unless the manual's spec is hot)",
  "Ignition off and battery disconnected",
  "Plugs out; turn the crank by hand, in its normal direction only",
  "Rag in the cam-chain tunnel and drain-backs so nothing can drop in",
  "Magnet ready for lifting shims; the proper bucket tool at hand",
  "The service manual has the last word on figures, torques and method",
];

export function CheckScreen() {
  const params = useSearchParams();
  const id = params.get("id") ?? "";
  // the step is this screen's own state, mirrored into the address for a reload; it does not wait
  // for the router to notice a replaced history entry (which a busy render could leave behind)
  const [stepOf, setStepOf] = useState<{ id: string; step: Step | undefined }>({ id, step: (params.get("step") as Step) ?? undefined });
  const step = stepOf.id === id ? stepOf.step : ((params.get("step") as Step) ?? undefined);
  const { db } = useLocal();
  const data = useLiveQuery(async () => {
    if (!db) return undefined;
    const check = await db.checks.get(id);
    if (!check) return null;
    const [engine, readings, tray, previous] = await Promise.all([
      db.engines.get(check.engineId),
      db.readings.where("checkId").equals(id).toArray(),
      db.tray.toArray(),
      db.checks.where("engineId").equals(check.engineId).toArray(),
    ]);
    // the shims the last check left in: the default for each bucket
    const before = previous.filter((c) => c.id !== id && new Date(c.startedAt) < new Date(check.startedAt)).sort((a, b) => +new Date(b.startedAt) - +new Date(a.startedAt))[0];
    const lastReadings = before ? await db.readings.where("checkId").equals(before.id).toArray() : [];
    return { check, engine: engine ?? null, readings, tray, lastReadings };
  }, [db, id]);

  if (data === undefined) return null;
  if (data === null || !data.engine) return <Notice tone="error">This check is not on this phone.</Notice>;
  return <CheckBody key={id} check={data.check} engine={data.engine} readings={data.readings} tray={data.tray} lastReadings={data.lastReadings} step={step} go={(s: Step) => {
        // a step is a view of the same record: change the address without a navigation (no request,
        // so it behaves the same offline)
        setStepOf({ id, step: s });
        window.history.replaceState(null, "", `/check?id=${id}&step=${s}`);
        window.scrollTo({ top: 0 });
      }} />;
}

function lastShims(lastReadings: LocalReading[]) {
  const m = new Map<string, number>();
  for (const r of [...lastReadings].sort((a, b) => a.round - b.round)) {
    const s = r.fittedShim ?? r.installedMicrometer ?? r.installedStamp;
    if (s != null) m.set(r.valve, s);
  }
  return m;
}

function CheckBody({ check, engine, readings, tray, lastReadings, step, go }: { check: LocalCheck; engine: LocalEngine; readings: LocalReading[]; tray: { size: number; count: number }[]; lastReadings: LocalReading[]; step?: Step; go: (s: Step) => void }) {
  const { db, user } = useLocal();
  const pool = usePool();
  const fit = poolForEngine(engine, pool.offeredToMe, user?.id ?? "");
  const sizes = useMemo(() => engineSizes(engine), [engine]);
  const seriesStep = "step" in engine.shims ? engine.shims.step : 0.05;
  const previous = useMemo(() => lastShims(lastReadings), [lastReadings]);
  const views = useMemo(() => valveViews(engine, readings, (v) => previous.get(v) ?? engine.assembledShim), [engine, readings, previous]);
  const [mirrored, setMirrored] = useState(engine.mirrored);
  const current: Step = step ?? (check.status === "closed" ? "plan" : readings.length ? "measure" : "prepare");
  let plan: ShimPlan | null = null;
  let planError: string | null = null;
  try {
    // the plan is worked out only for the steps that show it: a blade tap on Measure stays cheap
    if (current !== "measure" && current !== "prepare") plan = checkPlan(engine, views, tray, fit.pool);
  } catch (e) {
    planError = e instanceof LashInputError ? e.message : "The plan could not be worked out";
  }

  const save = (v: ValveView) => async (r: ReadingEntry) => {
    if (!db) return;
    await saveReading(db, check.id, { valve: v.valve.id, round: v.nextRound, fittedShim: null, ...r });
  };

  return (
    <div className="flex flex-col gap-4">
      <nav aria-label="Steps of the check" className="-mx-4 overflow-x-auto px-4">
        <ol className="flex gap-1.5">
          {STEPS.map((s, i) => (
            <li key={s.key}>
              <button type="button" aria-current={current === s.key ? "step" : undefined} onClick={() => go(s.key)} className={`min-h-12 rounded-xl border-2 px-3 font-bold whitespace-nowrap ${current === s.key ? "border-accent bg-accent text-accent-ink" : "border-line"}`}>
                {i + 1}. {s.label}
              </button>
            </li>
          ))}
        </ol>
      </nav>
      <p className="figures text-ink-soft">
        {engine.name} · {check.odometer.toLocaleString("en")} {engine.odometerUnit} · measure {check.measuredHot ? "hot" : "cold"}
      </p>
      {current === "prepare" && <Prepare checkId={check.id} onDone={() => go("measure")} />}
      {current === "measure" && <Measure engine={engine} views={views} sizes={sizes} step={seriesStep} save={save} mirrored={mirrored} setMirrored={setMirrored} onDone={() => go("plan")} previous={previous} checkId={check.id} />}
      {current === "plan" && (
        <PlanView engine={engine} check={check} views={views} plan={plan} error={planError} mirrored={mirrored} setMirrored={setMirrored} onFit={() => (db && setCheckStatus(db, check.id, "fitting"), go("fit"))} pool={pool} fit={fit} />
      )}
      {current === "plan" && <AskReview checkId={check.id} />}
      {current === "fit" && plan && <FitView engine={engine} views={views} plan={plan} checkId={check.id} onDone={() => (db && setCheckStatus(db, check.id, "verifying"), go("verify"))} />}
      {current === "verify" && <Verify engine={engine} views={views} sizes={sizes} step={seriesStep} save={save} check={check} />}
    </div>
  );
}

function Prepare({ checkId, onDone }: { checkId: string; onDone: () => void }) {
  const [ticked, setTicked] = useStored<boolean[]>(`lashwright.cautions.${checkId}`, NONE_TICKED);
  const toggle = (i: number) => setTicked(CAUTIONS.map((_, j) => (j === i ? !ticked[j] : !!ticked[j])));
  return (
    <section aria-labelledby="prepare-title" className="flex flex-col gap-3">
      <h2 id="prepare-title" className="text-2xl font-extrabold">
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

function stepTitle(tdc: number, angle: number) {
  return angle === 0 ? `Turn to cylinder ${tdc} firing TDC (compression)` : `Turn on ${angle}° to cylinder ${tdc} firing TDC`;
}

function Measure({ engine, views, sizes, step, save, mirrored, setMirrored, onDone, previous, checkId }: { engine: LocalEngine; views: ValveView[]; sizes: number[]; step: number; save: (v: ValveView) => (r: ReadingEntry) => Promise<void>; mirrored: boolean; setMirrored: (m: boolean) => void; onDone: () => void; previous: Map<string, number>; checkId: string }) {
  const { db } = useLocal();
  const guide = useMemo(() => {
    try {
      return rotationGuide({ firingOrder: engine.firingOrder, firingAngles: engine.firingAngles ?? undefined, timing: engine.timing }).steps;
    } catch {
      return null;
    }
  }, [engine]);
  const [fill, setFill] = useState(engine.assembledShim ?? sizes[Math.floor(sizes.length / 2)]!);
  const unset = views.filter((v) => v.latest === undefined && v.installed == null);
  const measured = views.filter((v) => v.measured != null).length;
  const fillAll = async () => {
    if (!db) return;
    for (const v of unset) await saveReading(db, checkId, { valve: v.valve.id, round: 0, installedStamp: fill, installedMicrometer: null, feelerGo: null, feelerNoGo: null, measured: null, method: "feeler", fittedShim: null });
  };
  const pick = (valveId: string) => document.getElementById(`valve-${valveId}`)?.scrollIntoView({ behavior: "smooth", block: "start" });
  return (
    <section className="flex flex-col gap-4" aria-label="Measure">
      <EngineDiagram views={views} mirrored={mirrored} onMirror={setMirrored} onPick={pick} />
      <p className="figures font-bold" role="status">
        {measured} of {views.length} valves measured
      </p>
      {unset.length === views.length && previous.size === 0 && (
        <div className="flex flex-wrap items-center gap-2 rounded-xl border border-line p-3">
          <span className="font-bold">Fresh engine? Every bucket has</span>
          <select aria-label="Shim size for every bucket" value={fill} onChange={(e) => setFill(Number(e.target.value))} className="figures min-h-12 rounded-xl border-2 border-line bg-surface px-2 text-lg">
            {sizes.map((s) => (
              <option key={s} value={s}>
                {s.toFixed(step < 0.05 ? 3 : 2)} mm
              </option>
            ))}
          </select>
          <Button type="button" look="plain" onClick={fillAll}>
            Fill all
          </Button>
        </div>
      )}
      {!guide && <Notice tone="error">This engine&apos;s firing order and timing give no crank position where every valve is free: check the profile.</Notice>}
      {guide?.map((s, i) => {
        const here = s.valves.flatMap((ref) => views.filter((v) => v.valve.cylinder === ref.cylinder && v.valve.kind === ref.kind));
        return (
          <section key={i} aria-label={`Position ${i + 1}`} className="flex flex-col gap-3">
            <h2 className="rounded-xl bg-surface-2 p-3 text-xl font-extrabold">
              <span className="text-accent">
                {i + 1}/{guide.length}
              </span>{" "}
              {stepTitle(s.tdcCylinder, s.crankAngle)}, then measure{" "}
              {["intake", "exhaust"]
                .map((k) => {
                  const cyl = s.valves.filter((v) => v.kind === k).map((v) => v.cylinder);
                  return cyl.length ? `${k} ${cyl.join(", ")}` : "";
                })
                .filter(Boolean)
                .join("; ")}
            </h2>
            {here.map((v) => (
              <ValveCard key={v.valve.id} checkId={checkId} engine={engine} view={v} sizes={sizes} step={step} onSave={save(v)} />
            ))}
          </section>
        );
      })}
      <Button type="button" onClick={onDone} disabled={measured === 0}>
        See the shim plan
      </Button>
    </section>
  );
}

export function PlanView({ engine, check, views, plan, error, mirrored, setMirrored, onFit, pool, fit }: { engine: LocalEngine; check: LocalCheck; views: ValveView[]; plan: ShimPlan | null; error: string | null; mirrored: boolean; setMirrored: (m: boolean) => void; onFit?: () => void; pool?: ReturnType<typeof usePool>; fit?: PoolFit }) {
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
      <EngineDiagram views={views} mirrored={mirrored} onMirror={setMirrored} />
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

function placeWords(p: ShimMove["from"]) {
  return p.kind === "valve" ? p.valveId : p.kind === "tray" ? "the tray" : p.kind === "shop" ? "the new (bought) shims" : p.kind === "club" ? "the borrowed shims" : "the side (set aside)";
}

/** One tap: offer the club the shims this check sent back to the tray. */
function OfferReturned({ moves, engine }: { moves: ShimMove[]; engine: LocalEngine }) {
  const { db } = useLocal();
  const pool = usePool();
  const [sent, setSent] = useState(false);
  const back = new Map<number, number>();
  for (const m of moves) if (m.to.kind === "tray") back.set(m.size, (back.get(m.size) ?? 0) + 1);
  const club = pool.clubs[0];
  if (!club || back.size === 0) return null;
  const total = [...back.values()].reduce((a, b) => a + b, 0);
  if (sent) return <Notice tone="ok">✓ Offered to {club.name}: {total} shim{total === 1 ? "" : "s"}.</Notice>;
  return (
    <Button
      type="button"
      look="plain"
      onClick={async () => {
        if (!db) return;
        for (const [size, count] of back) await offerToClub(db, { id: crypto.randomUUID(), clubId: club.id, size, measuredSize: false, count, shimDiameter: engine.shimDiameter ?? null, note: `came out of ${engine.name}` });
        setSent(true);
        void pool.refresh();
      }}
    >
      Offer the {total} shim{total === 1 ? "" : "s"} back on the tray to {club.name}
    </Button>
  );
}

function FitView({ engine, views, plan, checkId, onDone }: { engine: LocalEngine; views: ValveView[]; plan: ShimPlan; checkId: string; onDone: () => void }) {
  const { db } = useLocal();
  const installed = Object.fromEntries(views.map((v) => [v.valve.id, v.installed ?? 0]));
  const [moves] = useState(() => workOrder(plan.assignments, installed));
  const [stored, setDone] = useStored<boolean[]>(`lashwright.fit.${checkId}`, NONE_TICKED);
  const done = moves.map((_, i) => stored.length === moves.length && !!stored[i]);
  const per = (id: string) => {
    const v = views.find((x) => x.valve.id === id)!;
    return valveLabel(v.valve, v.valve.kind === "intake" ? engine.intakePerCylinder : engine.exhaustPerCylinder);
  };
  const tick = async (i: number) => {
    if (!db) return;
    const m = moves[i]!;
    const on = !done[i];
    // the tray follows the ticks: a shim out of the tray or back into it
    if (m.from.kind === "tray") await adjustTray(db, m.size, on ? -1 : 1);
    if (m.to.kind === "tray") await adjustTray(db, m.size, on ? 1 : -1);
    if (m.to.kind === "valve") {
      const v = views.find((x) => x.valve.id === (m.to as { valveId: string }).valveId)!;
      const r = v.latest!;
      await saveReading(db, checkId, { ...r, fittedShim: on ? m.size : null });
    }
    setDone(done.map((d, j) => (j === i ? on : d)));
  };
  return (
    <section className="flex flex-col gap-3" aria-label="Fit">
      <h2 className="text-2xl font-extrabold">Swap list, in working order</h2>
      <p className="text-ink-soft">Work down the list: only one shim is ever loose in your hand. Lift shims with the magnet; never stack two.</p>
      <ol className="flex flex-col gap-2">
        {moves.map((m, i) => (
          <li key={i}>
            <button type="button" role="checkbox" aria-checked={done[i]} onClick={() => void tick(i)} className={`flex min-h-16 w-full items-center gap-3 rounded-xl border-2 p-3 text-left ${done[i] ? "border-ok" : "border-line"}`}>
              <span aria-hidden className="text-2xl">
                {done[i] ? "☑" : "☐"}
              </span>
              <span className="figures text-lg">
                <strong>{i + 1}.</strong> Take the <strong>{m.size.toFixed(2)}</strong> {m.from.kind === "valve" ? `out of ${per(m.from.valveId)}` : `from ${placeWords(m.from)}`} and {m.to.kind === "valve" ? <>fit it to <strong>{per(m.to.valveId)}</strong></> : m.to.kind === "tray" ? "put it on the tray" : "set it aside"}
              </span>
            </button>
          </li>
        ))}
      </ol>
      {done.every(Boolean) && <OfferReturned moves={moves} engine={engine} />}
      <Button type="button" disabled={!done.every(Boolean)} onClick={onDone}>
        {done.every(Boolean) ? "Re-measure the changed valves" : "Tick every swap to continue"}
      </Button>
    </section>
  );
}

function Verify({ engine, views, sizes, step, save, check }: { engine: LocalEngine; views: ValveView[]; sizes: number[]; step: number; save: (v: ValveView) => (r: ReadingEntry) => Promise<void>; check: LocalCheck }) {
  const { db } = useLocal();
  const router = useRouter();
  const changed = views.filter((v) => v.state === "fitted" || (v.latest && v.latest.round > 0));
  const open = views.filter((v) => ["tight", "loose", "fitted", "unmeasured"].includes(v.state));
  const close = async () => {
    if (!db) return;
    const note = open.length ? `Closed with ${open.map((v) => `${v.valve.id} (${v.state})`).join(", ")} still open.` : check.notes;
    const { saveCheck } = await import("@/lib/sync/writes");
    await saveCheck(db, { ...check, status: "closed", notes: note ?? null });
    router.push(`/engine?id=${engine.id}`);
  };
  return (
    <section className="flex flex-col gap-3" aria-label="Re-check">
      <h2 className="text-2xl font-extrabold">Measure the changed valves again</h2>
      {changed.length === 0 && <Notice>No valve has been changed in this check.</Notice>}
      {changed.map((v) => (
        <ValveCard key={v.valve.id} checkId={check.id} engine={engine} view={v} sizes={sizes} step={step} onSave={save(v)} />
      ))}
      {open.length === 0 ? <Notice tone="ok">✓ Every valve is in its band.</Notice> : <Notice>{open.length} valve{open.length === 1 ? " is" : "s are"} not yet in band: plan again, or close the check with them noted.</Notice>}
      <Button type="button" onClick={close} look={open.length ? "plain" : "primary"}>
        {open.length ? "Close the check with open items noted" : "Close the check"}
      </Button>
    </section>
  );
}
