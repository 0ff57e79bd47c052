import { z } from "zod";
import { nearSideSchema, shimPositionSchema } from "../lash";
import { borrowInput, borrowMoveInput, offerInput } from "../pool/rules";
import {
  checkDate,
  checkInput,
  checkStatus,
  commentInput,
  engineFields,
  engineFieldsV2,
  engineInputV1,
  engineRules,
  idSchema,
  readingInput,
  trayItemInput,
  verdictInput,
} from "../schemas/records";

/**
 * The outbox's mutations: a versioned name and its arguments, validated by the same schemas on the
 * phone (before queueing) and on the server (before applying). A name never changes meaning: a new
 * shape gets a new version, and the server keeps accepting the old ones, so an outbox written by
 * an older app still goes through.
 */
const checkPut = checkInput.extend({
  id: idSchema,
  engineId: idSchema,
  status: checkStatus.default("measuring"),
});

export const MUTATIONS = {
  // an older phone's engine, without where the shims sit: applied, the stored answer is kept
  "engine.put/1": engineInputV1.and(z.object({ id: idSchema })),
  // the engine with where the shims sit ("over", "under", or null: not said)
  "engine.put/2": engineFieldsV2
    .extend({ id: idSchema, shimPosition: shimPositionSchema.nullable() })
    .superRefine(engineRules),
  // the engine with which side is nearest the mechanic ("intake" or "exhaust"), as well
  "engine.put/3": engineFields
    .extend({ id: idSchema, shimPosition: shimPositionSchema.nullable(), nearSide: nearSideSchema })
    .superRefine(engineRules),
  "engine.delete/1": z.object({ id: idSchema }),
  "check.put/1": checkPut,
  // a check written down after the fact (imported from an old log) carries the day it was made
  "check.put/2": checkPut.extend({ startedAt: checkDate.optional() }),
  "check.delete/1": z.object({ id: idSchema }),
  "reading.put/1": z.object({ checkId: idSchema, reading: readingInput }),
  "tray.put/1": trayItemInput.extend({ id: idSchema }),
  "tray.delete/1": z.object({ id: idSchema }),
  "comment.add/1": commentInput.extend({ id: idSchema, checkId: idSchema }),
  "verdict.set/1": verdictInput.extend({ shareId: idSchema }),
  "pool.offer/1": offerInput.extend({ id: idSchema }),
  "pool.withdraw/1": z.object({ id: idSchema }),
  "borrow.ask/1": borrowInput.extend({ id: idSchema }),
  "borrow.move/1": borrowMoveInput.extend({ id: idSchema }),
} as const;

export type MutationName = keyof typeof MUTATIONS;
export type MutationArgs<N extends MutationName> = z.output<(typeof MUTATIONS)[N]>;

export const mutationNames = Object.keys(MUTATIONS) as MutationName[];

/**
 * How many mutations one push may carry, and so the phone's batch: every app ever shipped sent 200
 * at most, so a longer list is a script, refused whole (422) before anything is read from the
 * database. A push's cost is bounded by it; the rate of pushes by the write budget (server/sync.ts).
 */
export const PUSH_BATCH = 200;

export const pushInput = z.object({
  clientId: idSchema,
  mutations: z
    .array(
      z.object({
        id: z.number().int().min(1).max(Number.MAX_SAFE_INTEGER),
        name: z.string().max(60),
        args: z.unknown(),
      }),
    )
    .max(PUSH_BATCH, { error: `at most ${PUSH_BATCH} mutations in one push: send the rest in the next` })
    .refine((ms) => ms.every((m, i) => i === 0 || m.id > ms[i - 1]!.id), { error: "mutation ids must increase" }),
});
export type PushInput = z.infer<typeof pushInput>;

/**
 * A pull cursor. Today's is "o:N", N being the owner's change counter (db/versions.ts): every row
 * stamped at or below N has been pulled. Between the pages of one pull it is "o:N:K:ID": every row
 * below N, and those at N up to table K's row ID, have been pulled (db/queries/sync.ts). The phone
 * keeps either as it came. A bare number is a cursor into the old global counter, which phones may
 * still hold: it is accepted and answered with a full pull.
 */
export const CURSOR_PREFIX = "o:";
export const pullInput = z.object({
  cursor: z
    .union([
      z.string().regex(/^o:\d{1,15}(?::[0-9]:[0-9A-Za-z-]{1,36})?$/, { error: 'a cursor looks like "o:123"' }),
      z.number().int().min(0),
    ])
    .nullable(),
});
export type Cursor = z.infer<typeof pullInput>["cursor"];

/** The form of every mutation name any version has used: "engine.put/2", "borrow.ask/1". */
export const MUTATION_NAME_FORM = /^[a-z]+\.[a-z]+\/[1-9][0-9]{0,2}$/;

/** A name of this table's own (never one every object inherits, such as "constructor"). */
export function isMutationName(name: string): name is MutationName {
  return Object.hasOwn(MUTATIONS, name);
}

/** Parse one mutation's arguments; returns the reason it is refused, or the parsed args. */
export function parseMutation(
  name: string,
  args: unknown,
): { ok: true; name: MutationName; args: unknown } | { ok: false; reason: string; unknown?: true } {
  // own properties only: "constructor", "__proto__" or "toString" are names of every object's
  // prototype, and `in` would find them (OWASP Prototype Pollution Prevention Cheat Sheet; ASVS 5.0
  // V15 Secure Coding and Architecture). A name not of the form every version uses ("thing.verb/N")
  // was never a change: refused for good. A well-formed name we do not know may be a newer phone's:
  // held for later (unknown), never refused.
  if (!isMutationName(name))
    return {
      ok: false,
      reason: `unknown change "${name}"`,
      ...(MUTATION_NAME_FORM.test(name) ? { unknown: true as const } : {}),
    };
  const r = MUTATIONS[name as MutationName].safeParse(args);
  if (!r.success) {
    const i = r.error.issues[0]!;
    return { ok: false, reason: `${i.path.join(".") || "args"}: ${i.message}` };
  }
  return { ok: true, name: name as MutationName, args: r.data };
}
