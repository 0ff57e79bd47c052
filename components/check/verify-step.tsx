"use client";

import { useRouter } from "next/navigation";
import { openValves, recheckValves, type ValveView } from "@/lib/check/derive";
import type { LocalCheck, LocalEngine } from "@/lib/sync/local-db";
import { saveCheck } from "@/lib/sync/writes";
import { useLocal } from "@/components/sync/local-provider";
import { Button, Notice } from "@/components/ui/controls";
import { ValveCard, type ReadingEntry } from "./valve-card";

const valves = (n: number) => `${n} valve${n === 1 ? "" : "s"}`;

/** What is still open, in the order the mechanic deals with it: re-measure first, then what is out of band. */
function openWords(open: ValveView[]) {
  const waiting = open.filter((v) => v.state === "fitted").length;
  const out = open.filter((v) => v.state === "tight" || v.state === "loose").length;
  const never = open.filter((v) => v.state === "unmeasured").length;
  const parts = [waiting && `${valves(waiting)} to re-measure`, out && `${valves(out)} out of band: plan again, or close the check with them noted`, never && `${valves(never)} never measured`].filter(Boolean);
  return `${parts.join("; ")}.`;
}

/** Step 5: re-measure the valves of this fit until all are in band, or close with the open ones noted. */
export function VerifyStep({ engine, views, sizes, step, save, check }: { engine: LocalEngine; views: ValveView[]; sizes: number[]; step: number; save: (v: ValveView) => (r: ReadingEntry) => Promise<void>; check: LocalCheck }) {
  const { db } = useLocal();
  const router = useRouter();
  const changed = recheckValves(views);
  const open = openValves(views);
  const close = async () => {
    if (!db) return;
    const note = open.length ? `Closed with ${open.map((v) => `${v.valve.id} (${v.state})`).join(", ")} still open.` : check.notes;
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
      {open.length === 0 ? <Notice tone="ok">✓ Every valve is in its band.</Notice> : <Notice>{openWords(open)}</Notice>}
      <Button type="button" onClick={close} look={open.length ? "plain" : "primary"}>
        {open.length ? "Close the check with open items noted" : "Close the check"}
      </Button>
    </section>
  );
}
