import "./zod-config";
import { z } from "zod";
import {
  lengthMm,
  nearSideSchema,
  positiveLengthMm,
  rotationInputSchema,
  shimPositionSchema,
  shimSeries,
  specSchema,
  timingSchema,
  LashInputError,
  LENGTH_UNITS,
  ODOMETER_UNITS,
  INSTALLED_RANGE_SLACK_MM,
  toNm,
} from "../lash";
import { parseValveName } from "../lash/valves";
import { VERDICT_NAMES } from "../check/verdicts";
import { labelSchema } from "./label";
import { ROLES } from "../roles";

/**
 * Input schemas of the records the API and the offline outbox accept. One schema per resource; the
 * update variants are `.partial()` of the create ones, re-checked as a whole after merging.
 */

/** A record's id: a lowercase uuid, made by the phone or the server. */
export const ID_PATTERN = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;
export const idSchema = z.string().regex(ID_PATTERN, { error: "not a valid id" });

/** A check's steps, in order: the schema, the database enum and the phone share this list. */
export const CHECK_STATUSES = ["measuring", "planned", "fitting", "verifying", "closed"] as const;
export const checkStatus = z.enum(CHECK_STATUSES);
export type CheckStatus = z.infer<typeof checkStatus>;
const name = labelSchema(120, "give it a name");

const shimSystem = z.union([
  z.object({ min: positiveLengthMm, max: positiveLengthMm, step: positiveLengthMm }).superRefine((s, ctx) => {
    try {
      shimSeries(s.min, s.max, s.step);
    } catch (e) {
      ctx.addIssue({
        code: "custom",
        path: ["step"],
        message: e instanceof LashInputError ? e.message : "not a valid series",
      });
    }
  }),
  z.object({ sizes: z.array(positiveLengthMm).min(1, { error: "list at least one size" }).max(400) }),
]);

/** The engine profile as the first app versions sent it ("engine.put/1" keeps exactly this shape). */
const engineFieldsV1 = z.object({
  id: idSchema.optional(),
  name,
  cylinders: z.number().int().min(1, { error: "1 to 16 cylinders" }).max(16, { error: "1 to 16 cylinders" }),
  intakePerCylinder: z.number().int().min(1).max(3),
  exhaustPerCylinder: z.number().int().min(1).max(2),
  firingOrder: z.array(z.number().int().min(1).max(16)).min(1).max(16),
  firingAngles: z.array(z.number().finite().min(0).max(720)).nullable().optional(),
  timing: timingSchema.optional(),
  intake: specSchema,
  exhaust: specSchema,
  measuredHot: z.boolean().default(false),
  shims: shimSystem,
  shimDiameter: positiveLengthMm.nullable().optional(),
  assembledShim: positiveLengthMm.nullable().optional(),
  displayUnit: z.enum(LENGTH_UNITS).default("mm"),
  odometerUnit: z.enum(ODOMETER_UNITS).default("km"),
  mirrored: z.boolean().default(false),
});

/**
 * Where the shims sit (lib/lash/schemas.ts). Null is "not said": an engine made before the profile
 * asked, or by an older phone; the screens then ask before anything depends on it.
 */
export const engineFieldsV2 = engineFieldsV1.extend({ shimPosition: shimPositionSchema.nullable().optional() });

/**
 * Which side is nearest the mechanic (lib/lash/schemas.ts). Absent or null from an older phone: the
 * stored answer is kept, and an engine that never said has its exhausts nearest (drawn as before).
 */
export const engineFields = engineFieldsV2.extend({ nearSide: nearSideSchema.nullable().optional() });

function engineRules(e: z.infer<typeof engineFieldsV1>, ctx: z.RefinementCtx) {
  if (e.firingOrder.length !== e.cylinders) {
    ctx.addIssue({ code: "custom", path: ["firingOrder"], message: `name all ${e.cylinders} cylinders once` });
    return;
  }
  const r = rotationInputSchema.safeParse({
    firingOrder: e.firingOrder,
    firingAngles: e.firingAngles ?? undefined,
    timing: e.timing,
  });
  if (!r.success) for (const i of r.error.issues) ctx.addIssue({ code: "custom", path: i.path, message: i.message });
}

export const engineInput = engineFields.superRefine(engineRules);
/** The first shape, without where the shims sit: what an older phone's outbox holds. */
export const engineInputV1 = engineFieldsV1.superRefine(engineRules);
export const engineUpdate = engineFields.partial();
export type EngineInput = z.infer<typeof engineInput>;
export { engineRules };

export const checkInput = z.object({
  id: idSchema.optional(),
  odometer: z
    .number({ error: "enter the odometer or hours" })
    .finite()
    .min(0, { error: "cannot be negative" })
    .max(9_999_999),
  measuredHot: z.boolean().default(false),
  notes: z.string().max(4000).nullable().optional(),
});
/**
 * When a check was made, for one recorded after the fact: an ISO time, not before 1950 (older logs
 * are not what this is for) and not more than a day ahead (time zones) of now.
 */
export const checkDate = z.iso.datetime({ offset: true, error: "a date and time like 2024-05-31T12:00:00Z" }).refine(
  (s) => {
    const t = Date.parse(s);
    return t >= Date.UTC(1950, 0, 1) && t <= Date.now() + 86_400_000;
  },
  { error: "must lie between 1950 and today" },
);

export const checkUpdate = checkInput.omit({ id: true }).partial().extend({ status: checkStatus.optional() });

export const valveKey = z
  .string()
  .refine((v) => parseValveName(v) !== null, { error: 'a valve is named like "I1.1" or "E4.2"' });

export const readingInput = z
  .object({
    valve: valveKey,
    round: z.number().int().min(0).max(50).default(0),
    installedStamp: positiveLengthMm.nullable().optional(),
    installedMicrometer: positiveLengthMm.nullable().optional(),
    feelerGo: lengthMm.nullable().optional(),
    feelerNoGo: lengthMm.nullable().optional(),
    measured: lengthMm.nullable().optional(),
    method: z.enum(["feeler", "typed"]).default("feeler"),
    fittedShim: positiveLengthMm.nullable().optional(),
  })
  .superRefine((r, ctx) => {
    if (r.feelerGo != null && r.feelerNoGo != null && r.feelerNoGo <= r.feelerGo)
      ctx.addIssue({
        code: "custom",
        path: ["feelerNoGo"],
        message: "the no-go blade must be thicker than the go blade",
      });
  });
export type ReadingInput = z.infer<typeof readingInput>;

/** What a reading says about a valve (beyond which valve and round it is): one list for every layer. */
export const READING_VALUE_FIELDS = [
  "installedStamp",
  "installedMicrometer",
  "feelerGo",
  "feelerNoGo",
  "measured",
  "method",
  "fittedShim",
] as const;
export type ReadingValueField = (typeof READING_VALUE_FIELDS)[number];

/** A reading's values with each one missing as null: what is stored, filed and read by the screens. */
export function readingValues<R extends Partial<Record<ReadingValueField, unknown>>>(r: R) {
  return Object.fromEntries(READING_VALUE_FIELDS.map((f) => [f, r[f] ?? null])) as {
    [K in ReadingValueField]: undefined extends R[K] ? Exclude<R[K], undefined> | null : R[K];
  };
}

/** The fields every layer (the API, the phone, the export file) carries as they are, first in each. */
export const ENGINE_LAYOUT_FIELDS = [
  "id",
  "name",
  "cylinders",
  "intakePerCylinder",
  "exhaustPerCylinder",
  "firingOrder",
] as const;
export const CHECK_PLAIN_FIELDS = ["id", "engineId", "odometer", "measuredHot", "status", "notes"] as const;

export const readingsPut = z.object({ readings: z.array(readingInput).min(1).max(200) });

export const trayItemInput = z.object({
  id: idSchema.optional(),
  size: positiveLengthMm,
  measuredSize: z.boolean().default(false),
  count: z.number().int().min(0, { error: "cannot be negative" }).max(10_000),
  shimDiameter: positiveLengthMm.nullable().optional(),
});
export const trayItemUpdate = trayItemInput.omit({ id: true }).partial();

export const clubInput = z.object({ name });
export const roleSchema = z.enum(ROLES);
export const rolesInput = z.object({ roles: z.array(roleSchema).min(1, { error: "give at least one role" }).max(3) });
export const inviteInput = z.object({
  email: z
    .string()
    .trim()
    .toLowerCase()
    .max(254)
    .pipe(z.email({ error: "enter a valid e-mail address" })),
  role: roleSchema.default("mechanic"),
});
export const shareInput = z.object({ clubId: idSchema });
export const commentInput = z.object({
  id: idSchema.optional(),
  body: z.string().trim().min(1, { error: "write something" }).max(4000, { error: "at most 4000 characters" }),
  valve: valveKey.nullable().optional(),
});
export const verdictInput = z.object({
  verdict: z.enum(VERDICT_NAMES, { error: `a verdict is ${VERDICT_NAMES.join(", ")}` }),
});

/**
 * Readings checked against their engine: the valve must exist on it and the shims must lie within
 * its shim system (with the same slack the planner allows for worn or odd stock).
 */
export function readingProblems(
  engine: { cylinders: number; intakePerCylinder: number; exhaustPerCylinder: number; shimSizes: number[] },
  rs: ReadingInput[],
): Record<string, string> {
  const out: Record<string, string> = {};
  const slack = toNm(INSTALLED_RANGE_SLACK_MM);
  const lo = Math.min(...engine.shimSizes.map(toNm)) - slack;
  const hi = Math.max(...engine.shimSizes.map(toNm)) + slack;
  rs.forEach((r, i) => {
    const v = parseValveName(r.valve)!;
    const per = v.kind === "intake" ? engine.intakePerCylinder : engine.exhaustPerCylinder;
    if (v.cylinder < 1 || v.cylinder > engine.cylinders || v.index < 1 || v.index > per)
      out[`readings.${i}.valve`] = `this engine has no valve ${r.valve}`;
    for (const f of ["installedStamp", "installedMicrometer", "fittedShim"] as const) {
      const s = r[f];
      if (s != null && (toNm(s) < lo || toNm(s) > hi))
        out[`readings.${i}.${f}`] = `${s} mm is outside this engine's shim range`;
    }
  });
  return out;
}
