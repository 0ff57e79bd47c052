import { LashInputError } from "../lash";
import { parseMutation, type MutationArgs, type MutationName } from "./mutations";
import { getMeta, setMeta, type LocalDb } from "./local-db";

/**
 * Every write: validate with the shared schema, change the local records, and append the mutation
 * to the outbox, all in one IndexedDB transaction, so a tap is either fully saved or not at all.
 */
export async function queueChange<N extends MutationName>(
  db: LocalDb,
  name: N,
  args: MutationArgs<N>,
  applyLocal: (args: MutationArgs<N>) => Promise<unknown>,
): Promise<number> {
  const parsed = parseMutation(name, args);
  if (!parsed.ok) throw new LashInputError(parsed.reason);
  return db.transaction("rw", writeTables(db), async () => {
    await applyLocal(parsed.args as MutationArgs<N>);
    const next = (await getMeta<number>(db, "nextMutationId")) ?? 1;
    await setMeta(db, "nextMutationId", next + 1);
    await db.outbox.add({ mutationId: next, name, args: parsed.args, createdAt: Date.now() });
    return next;
  });
}

/**
 * The tables a write may touch. A caller that needs several writes to land together wraps them in
 * one transaction over these: queueChange() then joins it instead of committing on its own.
 */
export function writeTables(db: LocalDb) {
  return [db.outbox, db.meta, db.engines, db.checks, db.readings, db.tray, db.comments];
}

/** Changes still to be sent: a refused one waits for the mechanic, not for a signal. */
export async function waitingCount(db: LocalDb): Promise<number> {
  return db.outbox.filter((m) => m.held?.kind !== "refused").count();
}
