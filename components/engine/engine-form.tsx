"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import { useRouter, useSearchParams } from "next/navigation";
import { useEffect, useState, type ReactNode } from "react";
import { useForm, type Resolver, type UseFormRegisterReturn } from "react-hook-form";
import {
  ENGINE_PRESETS,
  fieldErrors,
  LENGTH_UNITS,
  ODOMETER_UNITS,
  type LengthUnit,
  type OdometerUnit,
  type NearSide,
  type ShimPosition,
} from "@/lib/lash";
import { SHIM_POSITION_WORDS } from "@/lib/check/shim-position";
import { engineInput } from "@/lib/schemas/records";
import { saveEngine } from "@/lib/sync/later";
import type { LocalEngine } from "@/lib/sync/local-db";
import { useLocalCore } from "@/components/sync/local-provider";
import { Button, Field, inputClass, Notice, SelectField } from "@/components/ui/controls";
import { parseDecimal } from "@/lib/parse-decimal";

/** Form values are what the fields hold (text); the shared engine schema decides what is valid. */
interface FormValues {
  preset: string;
  name: string;
  cylinders: string;
  intakePerCylinder: string;
  exhaustPerCylinder: string;
  firingOrder: string;
  firingAngles: string;
  timing: { ivo: string; ivc: string; evo: string; evc: string };
  intake: { min: string; max: string };
  exhaust: { min: string; max: string };
  measuredHot: boolean;
  shims: { min: string; max: string; step: string };
  assembledShim: string;
  shimDiameter: string;
  /** over or under the bucket; empty: not said yet (an engine from before it was asked) */
  shimPosition: "" | ShimPosition;
  /** where cylinder 1 is as the mechanic faces the engine at work */
  facing: "left" | "right";
  /** the side of the head nearest the mechanic, drawn at the bottom */
  nearSide: NearSide;
  displayUnit: LengthUnit;
  odometerUnit: OdometerUnit;
}

const LENGTH_UNIT_WORDS: Record<LengthUnit, string> = { mm: "millimetres", in: "inches" };
const ODOMETER_UNIT_WORDS: Record<OdometerUnit, string> = { km: "km", mi: "miles", h: "hours" };

/** Radio buttons, one labelled box each, for one registered field. */
const radios = (choices: readonly (readonly [string, string])[], field: UseFormRegisterReturn) =>
  choices.map(([value, label]) => (
    <label key={value} className="flex min-h-12 items-center gap-3 rounded-xl border-2 border-line px-3 font-bold">
      <input type="radio" value={value} className="h-6 w-6" {...field} />
      {label}
    </label>
  ));

const num = (s: string) => parseDecimal(s) ?? undefined;
const list = (s: string) =>
  s
    .split(/[\s,;-]+/)
    .filter(Boolean)
    .map(Number);

function toEngine(v: FormValues, id: string) {
  return {
    id,
    name: v.name,
    cylinders: num(v.cylinders),
    intakePerCylinder: num(v.intakePerCylinder),
    exhaustPerCylinder: num(v.exhaustPerCylinder),
    firingOrder: list(v.firingOrder),
    firingAngles: v.firingAngles.trim() ? list(v.firingAngles) : null,
    timing: { ivo: num(v.timing.ivo), ivc: num(v.timing.ivc), evo: num(v.timing.evo), evc: num(v.timing.evc) },
    intake: { min: num(v.intake.min), max: num(v.intake.max) },
    exhaust: { min: num(v.exhaust.min), max: num(v.exhaust.max) },
    measuredHot: v.measuredHot,
    shims: { min: num(v.shims.min), max: num(v.shims.max), step: num(v.shims.step) },
    assembledShim: num(v.assembledShim) ?? null,
    shimDiameter: num(v.shimDiameter) ?? null,
    shimPosition: v.shimPosition || null,
    displayUnit: v.displayUnit,
    odometerUnit: v.odometerUnit,
    mirrored: v.facing === "right",
    nearSide: v.nearSide,
  };
}

function fromEngine(e: LocalEngine): FormValues {
  const s =
    "step" in e.shims ? e.shims : { min: Math.min(...e.shims.sizes), max: Math.max(...e.shims.sizes), step: 0.05 };
  const t = (n: number | undefined | null) => (n == null ? "" : String(n));
  return {
    preset: "",
    name: e.name,
    cylinders: t(e.cylinders),
    intakePerCylinder: t(e.intakePerCylinder),
    exhaustPerCylinder: t(e.exhaustPerCylinder),
    firingOrder: e.firingOrder.join("-"),
    firingAngles: e.firingAngles?.join(", ") ?? "",
    timing: { ivo: t(e.timing.ivo), ivc: t(e.timing.ivc), evo: t(e.timing.evo), evc: t(e.timing.evc) },
    intake: { min: t(e.intake.min), max: t(e.intake.max) },
    exhaust: { min: t(e.exhaust.min), max: t(e.exhaust.max) },
    measuredHot: e.measuredHot,
    shims: { min: t(s.min), max: t(s.max), step: t(s.step) },
    assembledShim: t(e.assembledShim),
    shimDiameter: t(e.shimDiameter),
    shimPosition: e.shimPosition ?? "",
    facing: e.mirrored ? "right" : "left",
    nearSide: e.nearSide ?? "exhaust",
    displayUnit: e.displayUnit,
    odometerUnit: e.odometerUnit,
  };
}

const BLANK: FormValues = {
  preset: "",
  name: "",
  cylinders: "4",
  intakePerCylinder: "2",
  exhaustPerCylinder: "2",
  firingOrder: "1-3-4-2",
  firingAngles: "",
  timing: { ivo: "20", ivc: "50", evo: "50", evc: "20" },
  intake: { min: "", max: "" },
  exhaust: { min: "", max: "" },
  measuredHot: false,
  shims: { min: "2.50", max: "3.30", step: "0.05" },
  assembledShim: "",
  shimDiameter: "",
  shimPosition: "",
  facing: "left",
  nearSide: "exhaust",
  displayUnit: "mm",
  odometerUnit: "km",
};

/**
 * What an empty required field lacks and where the figure comes from, instead of the schema's
 * generic "must be a number".
 */
const MANUAL = "from the engine's service manual (the valve clearance table)";
const MISSING: Record<string, string> = {
  name: "Missing: give the engine a name you will recognise",
  cylinders: "Missing: how many cylinders the engine has",
  intakePerCylinder: "Missing: intake valves per cylinder (count the intake cam lobes over one cylinder)",
  exhaustPerCylinder: "Missing: exhaust valves per cylinder (count the exhaust cam lobes over one cylinder)",
  firingOrder: "Missing: the firing order, from the service manual or the cylinder head casting, e.g. 1-3-4-2",
  "intake.min": `Missing: the smallest intake clearance allowed, ${MANUAL}`,
  "intake.max": `Missing: the largest intake clearance allowed, ${MANUAL}`,
  "exhaust.min": `Missing: the smallest exhaust clearance allowed, ${MANUAL}`,
  "exhaust.max": `Missing: the largest exhaust clearance allowed, ${MANUAL}`,
  "shims.min": "Missing: the thinnest shim of the series, from the manual or the shim kit",
  "shims.max": "Missing: the thickest shim of the series, from the manual or the shim kit",
  "shims.step": "Missing: the step between shim sizes, from the manual or the shim kit (often 0.05 mm)",
  shimPosition:
    "Missing: where the shims sit. With the cam cover off, a shim in a recess on top of the bucket is over it; none to be seen, it is under (the manual says which)",
};

const valueAt = (v: FormValues, path: string) =>
  path.split(".").reduce<unknown>((o, k) => (o as Record<string, unknown> | undefined)?.[k], v);

const resolverFor =
  (id: string): Resolver<FormValues> =>
  async (values) => {
    const parsed = engineInput.safeParse(toEngine(values, id));
    // the profile asks where the shims sit: the Fit step's whole method follows from it
    const unsaid = values.shimPosition === "";
    if (parsed.success && !unsaid) return { values, errors: {} };
    const errors: Record<string, { type: string; message: string }> = {};
    if (unsaid) errors.shimPosition = { type: "required", message: MISSING.shimPosition! };
    // a problem with one item of a list is shown at the list; the series as a whole at its step
    const fieldOf = (path: string) =>
      path.startsWith("firingOrder")
        ? "firingOrder"
        : path.startsWith("firingAngles")
          ? "firingAngles"
          : path === "shims"
            ? "shims.step"
            : path;
    for (const [key, message] of Object.entries(fieldErrors(parsed.success ? [] : parsed.error.issues, fieldOf))) {
      const value = valueAt(values, key);
      const missing = typeof value === "string" && value.trim() === "" ? MISSING[key] : undefined;
      errors[key] ??= { type: "schema", message: missing ?? message };
    }
    // react-hook-form wants nested error objects for nested fields
    const nested: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(errors)) {
      const parts = k.split(".");
      let cur = nested;
      parts.slice(0, -1).forEach((p) => (cur = (cur[p] ??= {}) as Record<string, unknown>));
      cur[parts.at(-1)!] = v;
    }
    return { values: {}, errors: nested as never };
  };

export function EngineForm() {
  const params = useSearchParams();
  const router = useRouter();
  const { db } = useLocalCore();
  const editing = params.get("id");
  const [id] = useState(() => editing ?? crypto.randomUUID());
  const existing = useLiveQuery(() => (db && editing ? db.engines.get(editing) : undefined), [db, editing]);
  const form = useForm<FormValues>({ resolver: resolverFor(id), defaultValues: BLANK });
  const { errors, isSubmitting } = form.formState;
  const [failure, setFailure] = useState<string | null>(null);

  useEffect(() => {
    if (existing) form.reset(fromEngine(existing));
  }, [existing, form]);

  const applyPreset = (key: string) => {
    const p = ENGINE_PRESETS.find((x) => x.key === key);
    if (!p) return;
    form.setValue("cylinders", String(p.cylinders));
    form.setValue("intakePerCylinder", String(p.intakePerCylinder));
    form.setValue("exhaustPerCylinder", String(p.exhaustPerCylinder));
    form.setValue("firingOrder", p.firingOrder.join("-"));
    form.setValue("firingAngles", p.firingAngles?.join(", ") ?? "");
    form.setValue("shimPosition", p.shimPosition);
    form.setValue("shims", {
      min: p.shims.min.toFixed(p.shims.step < 0.05 ? 3 : 2),
      max: p.shims.max.toFixed(p.shims.step < 0.05 ? 3 : 2),
      step: String(p.shims.step),
    });
  };

  const onSubmit = form.handleSubmit(async (values) => {
    if (!db) return;
    setFailure(null);
    try {
      const parsed = engineInput.parse(toEngine(values, id));
      await saveEngine(db, { ...parsed, id, shimPosition: parsed.shimPosition ?? null });
      router.push(`/engine?id=${id}`);
    } catch (e) {
      setFailure(e instanceof Error ? e.message : "Could not save");
    }
  });

  const err = (path: string) =>
    path.split(".").reduce<unknown>((o, k) => (o as Record<string, unknown> | undefined)?.[k], errors) as
      { message?: string } | undefined;
  const text = (name: string, label: string, opts: { hint?: ReactNode; unit?: string; numeric?: boolean } = {}) => (
    <Field id={name} label={opts.unit ? `${label} (${opts.unit})` : label} error={err(name)?.message} hint={opts.hint}>
      <input
        id={name}
        inputMode={opts.numeric ? "decimal" : undefined}
        className={inputClass}
        {...form.register(name as never)}
      />
    </Field>
  );

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5">
      {failure && <Notice tone="error">{failure}</Notice>}
      {!editing && (
        <Field
          id="preset"
          label="Start from a layout"
          hint="Fills the layout and shim series; enter the spec from your service manual."
        >
          <select
            id="preset"
            className={inputClass}
            {...form.register("preset", { onChange: (e) => applyPreset(e.target.value) })}
          >
            <option value="">Choose a layout…</option>
            {ENGINE_PRESETS.map((p) => (
              <option key={p.key} value={p.key}>
                {p.label}
              </option>
            ))}
          </select>
        </Field>
      )}
      {text("name", "Name", { hint: "Your own name for it, e.g. “Blue four”" })}
      <fieldset className="grid grid-cols-3 gap-3" aria-describedby="layout-help">
        <legend className="mb-2 text-lg font-bold">Layout</legend>
        <p id="layout-help" className="col-span-3 text-sm text-ink-soft">
          <strong className="text-ink">Valves per cylinder:</strong> each valve has its own bucket and shim. Count the
          cam lobes over one cylinder: a lobe on the intake cam is an intake valve, one on the exhaust cam an exhaust
          valve.
        </p>
        {text("cylinders", "Cylinders", { numeric: true })}
        {text("intakePerCylinder", "Intakes / cyl", { numeric: true })}
        {text("exhaustPerCylinder", "Exhausts / cyl", { numeric: true })}
      </fieldset>
      {text("firingOrder", "Firing order", {
        hint: "The order in which the cylinders fire, numbered as the manual numbers them, e.g. 1-3-4-2. It tells the app where to stop the crank so each valve sits closed.",
      })}
      {text("firingAngles", "Firing angles (crank degrees, optional)", {
        hint: "Leave empty for even firing. A 90 degree twin: 0, 270",
      })}
      <fieldset className="grid grid-cols-2 gap-3" aria-describedby="bands-help">
        <legend className="mb-2 text-lg font-bold">Spec bands (from the manual)</legend>
        <p id="bands-help" className="col-span-2 text-sm text-ink-soft">
          <strong className="text-ink">Spec band:</strong> the smallest and largest gap the service manual allows
          between the cam and the bucket, one band for the intakes and one for the exhausts. A valve inside its band
          needs nothing; the plan aims for the middle.
        </p>
        {text("intake.min", "Intake from", { unit: "mm", numeric: true })}
        {text("intake.max", "Intake to", { unit: "mm", numeric: true })}
        {text("exhaust.min", "Exhaust from", { unit: "mm", numeric: true })}
        {text("exhaust.max", "Exhaust to", { unit: "mm", numeric: true })}
      </fieldset>
      <label className="flex min-h-12 items-center gap-3 font-bold">
        <input type="checkbox" className="h-6 w-6" {...form.register("measuredHot")} />
        Spec is for a hot engine (most are cold)
      </label>
      <fieldset className="grid grid-cols-3 gap-3" aria-describedby="series-help">
        <legend className="mb-2 text-lg font-bold">Shim series</legend>
        <p id="series-help" className="col-span-3 text-sm text-ink-soft">
          <strong className="text-ink">Shim series:</strong> the thicknesses your engine&apos;s shims come in, from the
          thinnest to the thickest, a fixed step apart (often 0.05 mm). The number etched on a shim is its thickness.
        </p>
        {text("shims.min", "Smallest", { unit: "mm", numeric: true })}
        {text("shims.max", "Largest", { unit: "mm", numeric: true })}
        {text("shims.step", "Step", { unit: "mm", numeric: true })}
      </fieldset>
      <fieldset className="flex flex-col gap-2" aria-describedby="position-help">
        <legend className="mb-1 text-lg font-bold">Where the shims sit</legend>
        <p id="position-help" className="text-sm text-ink-soft">
          Over the bucket, a shim is changed with the cams in, using a bucket tool. Under it, the camshaft over the
          valve comes out and goes back in time.
        </p>
        {(["over", "under"] as const).map((value) => (
          <label
            key={value}
            className="flex min-h-12 items-center gap-3 rounded-xl border-2 border-line px-3 font-bold"
          >
            <input
              type="radio"
              value={value}
              className="h-6 w-6"
              aria-describedby={err("shimPosition") ? "shimPosition-error" : undefined}
              {...form.register("shimPosition")}
            />
            {SHIM_POSITION_WORDS[value].long}
          </label>
        ))}
        {err("shimPosition")?.message && (
          <p id="shimPosition-error" className="text-sm font-bold text-tight">
            <span aria-hidden>✕ </span>
            {err("shimPosition")!.message}
          </p>
        )}
      </fieldset>
      {text("assembledShim", "Shim fitted at assembly (optional)", {
        unit: "mm",
        numeric: true,
        hint: "Offers a one-tap fill of every bucket on the first check",
      })}
      {text("shimDiameter", "Shim diameter (optional)", {
        unit: "mm",
        numeric: true,
        hint: "The plan then uses only tray and club shims of this diameter",
      })}
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-lg font-bold">As you face the engine at work</legend>
        <p className="text-sm text-ink-soft">
          On a stand, in a frame or in the vehicle: the diagram is drawn the way you see it, for you and for a mentor.
        </p>
        {radios(
          [
            ["left", "Cylinder 1 on your left"],
            ["right", "Cylinder 1 on your right"],
          ],
          form.register("facing"),
        )}
      </fieldset>
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-lg font-bold">Side nearest you</legend>
        <p className="text-sm text-ink-soft">
          The diagram and the printed sheet draw this side at the bottom, so the rows match the head in front of you.
        </p>
        {radios(
          [
            ["exhaust", "Exhaust side nearest me"],
            ["intake", "Intake side nearest me"],
          ],
          form.register("nearSide"),
        )}
      </fieldset>
      <details className="rounded-xl border border-line p-3">
        <summary className="min-h-12 cursor-pointer py-3 font-bold">
          Valve timing (crank degrees; defaults for a street engine)
        </summary>
        <div className="grid grid-cols-2 gap-3">
          {text("timing.ivo", "Intake opens BTDC", { numeric: true })}
          {text("timing.ivc", "Intake closes ABDC", { numeric: true })}
          {text("timing.evo", "Exhaust opens BBDC", { numeric: true })}
          {text("timing.evc", "Exhaust closes ATDC", { numeric: true })}
        </div>
      </details>
      <div className="grid grid-cols-2 gap-3">
        <SelectField
          id="displayUnit"
          label="Show lengths in"
          options={LENGTH_UNITS}
          words={LENGTH_UNIT_WORDS}
          {...form.register("displayUnit")}
        />
        <SelectField
          id="odometerUnit"
          label="Odometer in"
          options={ODOMETER_UNITS}
          words={ODOMETER_UNIT_WORDS}
          {...form.register("odometerUnit")}
        />
      </div>
      <Button type="submit" disabled={isSubmitting || !db}>
        Save engine
      </Button>
    </form>
  );
}
