import { isMutationName, type MutationArgs, type MutationName } from "./mutations";

/**
 * Which local record a queued mutation changes, as the key a pull checks before overwriting that
 * record (a change still waiting in the outbox wins over the server's older copy). One entry per
 * mutation name, typed over the names: a mutation added to lib/sync/mutations.ts without an entry
 * here does not compile, beside the server's applier table (server/appliers.ts). null: the mutation
 * changes no record a pull writes (comments and pool moves are only ever added or come back whole).
 */
export const PENDING_KEY: { readonly [N in MutationName]: (a: MutationArgs<N>) => string | null } = {
  "engine.put/1": (a) => `engine:${a.id}`,
  "engine.put/2": (a) => `engine:${a.id}`,
  "engine.put/3": (a) => `engine:${a.id}`,
  "engine.delete/1": (a) => `engine:${a.id}`,
  "check.put/1": (a) => `check:${a.id}`,
  "check.put/2": (a) => `check:${a.id}`,
  "check.delete/1": (a) => `check:${a.id}`,
  "reading.put/1": (a) => readingKey(a.checkId, a.reading.valve, a.reading.round),
  "tray.put/1": (a) => `tray:${a.id}`,
  "tray.delete/1": (a) => `tray:${a.id}`,
  "comment.add/1": () => null,
  "verdict.set/1": () => null,
  "pool.offer/1": () => null,
  "pool.withdraw/1": () => null,
  "borrow.ask/1": () => null,
  "borrow.move/1": () => null,
};

export const readingKey = (checkId: string, valve: string, round: number | undefined) =>
  `reading:${checkId}:${valve}:${round ?? 0}`;

/** The key of one outbox entry as stored (its args as the phone parsed them when it queued them). */
export function pendingKey(name: string, args: unknown): string | null {
  if (!isMutationName(name)) return null; // a name this build does not know changes nothing it draws
  return (PENDING_KEY[name] as (a: unknown) => string | null)(args);
}
