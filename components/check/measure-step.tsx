"use client";

import { useMemo, useState } from "react";
import { rotationGuide } from "@/lib/lash";
import type { ValveView } from "@/lib/check/derive";
import type { LocalEngine } from "@/lib/sync/local-db";
import { saveReading } from "@/lib/sync/writes";
import { useLocal } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { EngineDiagram } from "./engine-diagram";
import { ValveCard, type ReadingEntry } from "./valve-card";

function stepTitle(tdc: number, angle: number) {
  return angle === 0 ? `Turn to cylinder ${tdc} firing TDC (compression)` : `Turn on ${angle}° to cylinder ${tdc} firing TDC`;
}

/** Step 2: the rotation guide, each crank position with its valves' cards. */
export function MeasureStep({ engine, views, sizes, step, save, mirrored, setMirrored, onDone, previous, checkId }: { engine: LocalEngine; views: ValveView[]; sizes: number[]; step: number; save: (v: ValveView) => (r: ReadingEntry) => Promise<void>; mirrored: boolean; setMirrored: (m: boolean) => void; onDone: () => void; previous: Map<string, number>; checkId: string }) {
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
