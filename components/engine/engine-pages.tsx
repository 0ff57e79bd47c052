"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import Link from "next/link";
import { useRouter, useSearchParams } from "next/navigation";
import { useState } from "react";
import { formatLength, shimNumber } from "@/lib/lash";
import { saveCheck } from "@/lib/sync/later";
import { SHIM_POSITION_WORDS } from "@/lib/check/shim-position";
import { useLocalCore } from "@/components/sync/local-provider";
import { History } from "./history";
import { ImportChecks } from "./import-checks";
import { boundTo, Button, ButtonLink, InputField, Notice } from "@/components/ui/controls";
import { parseDecimal } from "@/lib/parse-decimal";

export function EngineList() {
  const { db } = useLocalCore();
  const engines = useLiveQuery(async () => db?.engines.orderBy("name").toArray(), [db]);
  if (!engines) return null;
  return (
    <div className="flex flex-col gap-3">
      {engines.length === 0 && (
        <Notice>No engines on this phone yet. Add the first one: it takes a minute with a layout preset.</Notice>
      )}
      <ul className="flex flex-col gap-3">
        {engines.map((e) => (
          <li key={e.id}>
            <Link
              href={`/engine?id=${e.id}`}
              className="flex min-h-16 flex-col justify-center rounded-2xl border border-line bg-surface p-4"
            >
              <span className="text-lg font-bold">{e.name}</span>
              <span className="text-ink-soft">
                {e.cylinders} cyl · {e.cylinders * (e.intakePerCylinder + e.exhaustPerCylinder)} valves · fires{" "}
                {e.firingOrder.join("-")}
              </span>
            </Link>
          </li>
        ))}
      </ul>
      <ButtonLink href="/engine/edit">+ Add an engine</ButtonLink>
    </div>
  );
}

export function EngineDetail() {
  const id = useSearchParams().get("id") ?? "";
  const router = useRouter();
  const { db } = useLocalCore();
  const engine = useLiveQuery(async () => (db ? ((await db.engines.get(id)) ?? null) : undefined), [db, id]);
  const checks = useLiveQuery(
    async () => db?.checks.where("engineId").equals(id).reverse().sortBy("startedAt"),
    [db, id],
  );
  const [odometer, setOdometer] = useState("");
  const [error, setError] = useState<string | null>(null);
  if (engine === undefined) return null;
  if (engine === null) return <Notice tone="error">This engine is not on this phone.</Notice>;
  const open = checks?.find((c) => c.status !== "closed");
  const unit = engine.displayUnit;
  const start = async () => {
    if (!db) return;
    const value = parseDecimal(odometer);
    if (value == null || !Number.isFinite(value) || value < 0)
      return setError(`Enter the odometer in ${engine.odometerUnit}`);
    const checkId = crypto.randomUUID();
    await saveCheck(db, { id: checkId, engineId: engine.id, odometer: value, measuredHot: engine.measuredHot });
    router.push(`/check?id=${checkId}`);
  };
  return (
    <div className="flex flex-col gap-5">
      <section className="rounded-2xl border border-line bg-surface p-4">
        <h2 className="text-2xl font-extrabold">{engine.name}</h2>
        <dl className="figures mt-2 grid grid-cols-2 gap-x-3 gap-y-1 text-base">
          <dt className="text-ink-soft">Layout</dt>
          <dd>
            {engine.cylinders} cyl, {engine.intakePerCylinder}+{engine.exhaustPerCylinder} valves
          </dd>
          <dt className="text-ink-soft">Firing order</dt>
          <dd>{engine.firingOrder.join("-")}</dd>
          <dt className="text-ink-soft">Intake</dt>
          <dd>
            {/* a length and its unit stay on one line ("0.20 mm", never "0.20" above "mm") */}
            <span className="whitespace-nowrap">{formatLength(engine.intake.min, unit)}</span> –{" "}
            <span className="whitespace-nowrap">{formatLength(engine.intake.max, unit)}</span>
          </dd>
          <dt className="text-ink-soft">Exhaust</dt>
          <dd>
            <span className="whitespace-nowrap">{formatLength(engine.exhaust.min, unit)}</span> –{" "}
            <span className="whitespace-nowrap">{formatLength(engine.exhaust.max, unit)}</span>
          </dd>
          <dt className="text-ink-soft">Measure</dt>
          <dd>{engine.measuredHot ? "hot" : "cold"}</dd>
          <dt className="text-ink-soft">Shims</dt>
          <dd data-testid="engine-shim-position">
            {engine.shimPosition
              ? SHIM_POSITION_WORDS[engine.shimPosition].short.replace(/^Shims /, "")
              : "not said: set it in the profile"}
          </dd>
          <dt className="text-ink-soft">Shim series</dt>
          <dd>
            {"step" in engine.shims
              ? `${shimNumber(engine.shims.min, engine.shims.step < 0.05)} to ${shimNumber(engine.shims.max, engine.shims.step < 0.05)} mm in ${engine.shims.step} mm steps`
              : `${engine.shims.sizes.length} sizes listed`}
          </dd>
          {engine.shimDiameter != null && (
            <>
              <dt className="text-ink-soft">Shim diameter</dt>
              <dd>{engine.shimDiameter} mm</dd>
            </>
          )}
          {engine.assembledShim != null && (
            <>
              <dt className="text-ink-soft">Fitted at assembly</dt>
              <dd>{shimNumber(engine.assembledShim)} mm in every bucket</dd>
            </>
          )}
          <dt className="text-ink-soft">Drawn with</dt>
          <dd data-testid="engine-facing">
            cylinder 1 on the {engine.mirrored ? "right" : "left"},{" "}
            {engine.nearSide === "intake" ? "intake" : "exhaust"} side nearest you
          </dd>
        </dl>
        <Link
          href={`/engine/edit?id=${engine.id}`}
          className="mt-2 inline-flex min-h-12 items-center font-bold underline"
        >
          Edit profile
        </Link>
      </section>
      {open ? (
        // one open check per engine: a second would plan from the same buckets and the same tray twice
        <section className="flex flex-col gap-3 rounded-2xl border-2 border-accent p-4" data-testid="open-check">
          <h2 className="text-xl font-extrabold">A check is under way</h2>
          <p>
            Started {new Date(open.startedAt).toLocaleDateString("en-GB")} at{" "}
            <span className="figures">
              {open.odometer.toLocaleString("en")} {engine.odometerUnit}
            </span>
            . Finish it, or close it from its Re-check step, before starting another: one check at a time keeps the plan
            and the tray right.
          </p>
          <ButtonLink href={`/check?id=${open.id}`}>Continue this check</ButtonLink>
        </section>
      ) : (
        <section className="flex flex-col gap-3 rounded-2xl border-2 border-accent p-4">
          <h2 className="text-xl font-extrabold">Start a check</h2>
          <InputField
            id="odometer"
            label={`Odometer now (${engine.odometerUnit})`}
            error={error ?? undefined}
            inputMode="decimal"
            className="figures"
            {...boundTo(odometer, setOdometer)}
          />
          <Button type="button" onClick={start}>
            Start check
          </Button>
        </section>
      )}
      <History engine={engine} />
      <section className="flex flex-col gap-2">
        <h2 className="text-xl font-extrabold">Checks</h2>
        {checks?.length === 0 && <p className="text-ink-soft">No checks yet.</p>}
        <ul className="flex flex-col gap-2">
          {checks?.map((c) => (
            <li key={c.id}>
              <Link
                href={`/check?id=${c.id}`}
                className="flex min-h-14 items-center justify-between rounded-xl border border-line bg-surface px-4"
              >
                <span className="figures font-bold">
                  {c.odometer.toLocaleString("en")} {engine.odometerUnit}
                </span>
                <span className="text-ink-soft">
                  {new Date(c.startedAt).toLocaleDateString("en-GB")} · {c.status === "closed" ? "closed" : "open"}
                </span>
              </Link>
            </li>
          ))}
        </ul>
      </section>
      <ImportChecks engine={engine} />
    </div>
  );
}

export function CheckList() {
  const { db } = useLocalCore();
  const rows = useLiveQuery(async () => {
    if (!db) return undefined;
    const [checks, engines] = await Promise.all([
      db.checks.orderBy("startedAt").reverse().toArray(),
      db.engines.toArray(),
    ]);
    const names = new Map(engines.map((e) => [e.id, e]));
    return checks.map((c) => ({ c, e: names.get(c.engineId) }));
  }, [db]);
  if (!rows) return null;
  if (rows.length === 0) return <Notice>No checks yet: open an engine and start one.</Notice>;
  return (
    <ul className="flex flex-col gap-2">
      {rows.map(({ c, e }) => (
        <li key={c.id}>
          <Link
            href={`/check?id=${c.id}`}
            className={`flex min-h-16 flex-col justify-center rounded-xl border bg-surface px-4 ${c.status === "closed" ? "border-line" : "border-accent"}`}
          >
            <span className="font-bold">{e?.name ?? "Engine"}</span>
            <span className="figures text-ink-soft">
              {c.odometer.toLocaleString("en")} {e?.odometerUnit} · {new Date(c.startedAt).toLocaleDateString("en-GB")}{" "}
              · {c.status === "closed" ? "closed" : "in progress"}
            </span>
          </Link>
        </li>
      ))}
    </ul>
  );
}
