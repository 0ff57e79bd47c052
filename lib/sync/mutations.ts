import { z } from "zod";
import { borrowInput, borrowMoveInput, offerInput } from "../pool/rules";
import { checkDate, checkInput, checkStatus, commentInput, engineInput, idSchema, readingInput, trayItemInput, verdictInput } from "../schemas/records";

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
  "engine.put/1": engineInput.and(z.object({ id: idSchema })),
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
    .max(1000, { error: "at most 1000 mutations in one push" })
    .refine((ms) => ms.every((m, i) => i === 0 || m.id > ms[i - 1]!.id), { error: "mutation ids must increase" }),
});
export type PushInput = z.infer<typeof pushInput>;

/**
 * A pull cursor. Today's is "o:N", N being the owner's change counter (db/versions.ts); the phone
 * keeps it as it came. A bare number is a cursor into the old global counter, which phones may
 * still hold: it is accepted and answered with one full pull.
 */
export const CURSOR_PREFIX = "o:";
export const pullInput = z.object({
  cursor: z.union([z.string().regex(/^o:\d{1,15}$/, { error: 'a cursor looks like "o:123"' }), z.number().int().min(0)]).nullable(),
});
export type Cursor = z.infer<typeof pullInput>["cursor"];

/** Parse one mutation's arguments; returns the reason it is refused, or the parsed args. */
export function parseMutation(name: string, args: unknown): { ok: true; name: MutationName; args: unknown } | { ok: false; reason: string; unknown?: true } {
  if (!Object.hasOwn(MUTATIONS, name)) return { ok: false, reason: `unknown change "${name}"`, unknown: true };
  const r = MUTATIONS[name as MutationName].safeParse(args);
  if (!r.success) {
    const i = r.error.issues[0]!;
    return { ok: false, reason: `${i.path.join(".") || "args"}: ${i.message}` };
  }
  return { ok: true, name: name as MutationName, args: r.data };
}

/** How many mutations the client sends in one push. */
export const PUSH_BATCH = 200;
