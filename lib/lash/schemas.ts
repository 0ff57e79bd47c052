import { z } from "zod";

/**
 * Zod schemas for every input of the computation core. The API routes and the offline outbox reuse
 * them, so a value the browser accepts is exactly a value the server accepts.
 */

/** The thickest shim or gap any valve train uses is a few millimetres; 20 mm is clearly nonsense. */
export const MAX_LENGTH_MM = 20;

export const lengthMm = z
  .number({ error: "must be a number in millimetres" })
  .finite({ error: "must be a finite number" })
  .min(0, { error: "cannot be negative" })
  .max(MAX_LENGTH_MM, { error: `must be at most ${MAX_LENGTH_MM} mm` });

export const positiveLengthMm = lengthMm.refine((v) => v > 0, { error: "must be greater than zero" });

/** A specified clearance band, optionally with a target other than its middle. */
export const specSchema = z
  .object({
    min: lengthMm,
    max: positiveLengthMm,
    target: lengthMm.optional(),
  })
  .superRefine((s, ctx) => {
    if (s.max <= s.min)
      ctx.addIssue({ code: "custom", path: ["max"], message: "the band's upper edge must be above its lower edge" });
    if (s.target !== undefined && (s.target < s.min || s.target > s.max))
      ctx.addIssue({ code: "custom", path: ["target"], message: "the target must lie inside the band" });
  });
export type Spec = z.input<typeof specSchema>;

export const shimSizesSchema = z
  .array(positiveLengthMm, { error: "must be a list of shim sizes in mm" })
  .min(1, { error: "needs at least one shim size" })
  .max(2000, { error: "at most 2000 shim sizes" });

export const shimSeriesSchema = z
  .object({ min: positiveLengthMm, max: positiveLengthMm, step: positiveLengthMm })
  .superRefine((s, ctx) => {
    if (s.max < s.min)
      ctx.addIssue({ code: "custom", path: ["max"], message: "the largest size must not be below the smallest" });
  });

export const feelerSchema = z.object({
  go: lengthMm,
  noGo: lengthMm.optional(),
});

export const recommendInputSchema = z.object({
  installed: positiveLengthMm,
  measured: lengthMm,
  spec: specSchema,
  sizes: shimSizesSchema,
});

export const valveIdSchema = z.string().min(1, { error: "a valve needs an id" }).max(64);

export const planValveSchema = z.object({
  id: valveIdSchema,
  installed: positiveLengthMm,
  measured: lengthMm,
  spec: specSchema,
});

export const trayItemSchema = z.object({
  size: positiveLengthMm,
  count: z.number().int({ error: "must be a whole number" }).min(0, { error: "cannot be negative" }).max(10_000),
});

/** Shims other club members offer to lend (already filtered to this engine's shim system). */
export const poolItemSchema = trayItemSchema.extend({ ownerId: z.string().min(1).max(64) });

export const planInputSchema = z
  .object({
    valves: z
      .array(planValveSchema)
      .min(1, { error: "needs at least one valve" })
      .max(128, { error: "at most 128 valves" }),
    sizes: shimSizesSchema,
    tray: z.array(trayItemSchema).max(2000).default([]),
    pool: z.array(poolItemSchema).max(2000).default([]),
    /** "fewest-bought" (the default): buy the fewest shims, then land nearest the target; "nearest-target" the other way round */
    aim: z.enum(["fewest-bought", "nearest-target"]).default("fewest-bought"),
    /** a new shim must leave at least this much above the band's tight edge (mm) */
    tightMargin: lengthMm.max(0.2, { error: "at most 0.2 mm" }).default(0),
  })
  .superRefine((p, ctx) => {
    const seen = new Set<string>();
    p.valves.forEach((v, i) => {
      if (seen.has(v.id))
        ctx.addIssue({ code: "custom", path: ["valves", i, "id"], message: `valve id "${v.id}" appears twice` });
      seen.add(v.id);
    });
  });

export const timingSchema = z.object({
  ivo: z.number().finite().min(-90).max(120),
  ivc: z.number().finite().min(-90).max(180),
  evo: z.number().finite().min(-90).max(180),
  evc: z.number().finite().min(-90).max(120),
});
export type ValveTiming = z.infer<typeof timingSchema>;

export const rotationInputSchema = z
  .object({
    firingOrder: z
      .array(z.number().int().min(1).max(16))
      .min(1, { error: "needs at least one cylinder" })
      .max(16, { error: "at most 16 cylinders" }),
    firingAngles: z.array(z.number().finite().min(0).max(720)).optional(),
    timing: timingSchema.optional(),
    margin: z.number().finite().min(0).max(90).optional(),
  })
  .superRefine((r, ctx) => {
    const n = r.firingOrder.length;
    const sorted = [...r.firingOrder].sort((a, b) => a - b);
    if (sorted.some((c, i) => c !== i + 1))
      ctx.addIssue({
        code: "custom",
        path: ["firingOrder"],
        message: `the firing order must name each cylinder 1 to ${n} once`,
      });
    if (r.firingAngles) {
      if (r.firingAngles.length !== n)
        ctx.addIssue({
          code: "custom",
          path: ["firingAngles"],
          message: "give one firing angle per cylinder in the firing order",
        });
      else if (new Set(r.firingAngles.map((a) => ((a % 720) + 720) % 720)).size !== n)
        ctx.addIssue({
          code: "custom",
          path: ["firingAngles"],
          message: "two cylinders cannot fire at the same crank angle",
        });
    }
  });

export const driftPointSchema = z.object({
  odometer: z.number().finite().min(0).max(10_000_000),
  installed: positiveLengthMm,
  measured: lengthMm,
});

export const driftInputSchema = z.object({
  points: z.array(driftPointSchema).max(1000),
  lowerLimit: lengthMm,
  currentShim: positiveLengthMm.optional(),
  /** the smallest change the readings can show: the blade step (mm) */
  resolution: positiveLengthMm.max(1).optional(),
  /** the shortest odometer span a trend may be drawn over, in the engine's odometer unit */
  minSpan: z.number().finite().min(0).max(1_000_000).optional(),
});

/**
 * Where an engine's shims sit (common practice; from memory): over the bucket, in a recess under the
 * cam lobe, changed with the cam in place; or under the bucket, on the valve stem, changed only with
 * the camshaft over that valve taken out and refitted in time.
 */
export const SHIM_POSITIONS = ["over", "under"] as const;
export const shimPositionSchema = z.enum(SHIM_POSITIONS, {
  error: 'where the shims sit is "over" or "under" the bucket',
});
export type ShimPosition = z.infer<typeof shimPositionSchema>;

/**
 * Which side of the head is nearest the mechanic at the bench (the engine's intake or its exhaust
 * side): the diagram and the worksheet draw that side's row at the bottom, as it is seen from there.
 */
export const NEAR_SIDES = ["intake", "exhaust"] as const;
export const nearSideSchema = z.enum(NEAR_SIDES, { error: 'the side nearest you is "intake" or "exhaust"' });
export type NearSide = z.infer<typeof nearSideSchema>;

/** Valve names as the check uses them: "I2.1" is intake, cylinder 2, first intake valve. */
export const valveNameSchema = z
  .string()
  .regex(/^[IE]\d{1,2}\.\d$/, { error: 'a valve is named like "I1.1" or "E4.2"' });

export const camsOutInputSchema = z.object({
  shimPosition: shimPositionSchema,
  /** the valves whose shim changes in this fit */
  valves: z.array(valveNameSchema).max(128, { error: "at most 128 valves" }),
});
