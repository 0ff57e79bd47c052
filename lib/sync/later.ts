import type * as Writes from "./writes";
import type * as Photos from "./photos";
import type * as LocalDbModule from "./local-db";

/**
 * The phone's writes, for the screens, loaded on first use: the outbox, Dexie and the shared
 * schemas that validate each change stay out of a page's first JavaScript (the shell paints
 * before them). The local database's module (components/sync/local-engine) loads the same modules
 * as soon as a page needs its records, so a tap does not wait for the network: by then the import
 * is already done and answers at once.
 */
type AsyncFn = (...args: never[]) => Promise<unknown>;
type AsyncKeys<M> = { [K in keyof M]: M[K] extends AsyncFn ? K : never }[keyof M];

function later<M, K extends AsyncKeys<M>>(load: () => Promise<M>, name: K): M[K] {
  return ((...args: unknown[]) =>
    load().then((m) => (m[name] as (...a: unknown[]) => Promise<unknown>)(...args))) as M[K];
}

const writes = () => import("./writes");
const photos = () => import("./photos");
const localDb = () => import("./local-db");

export const saveEngine = later<typeof Writes, "saveEngine">(writes, "saveEngine");
export const deleteEngine = later<typeof Writes, "deleteEngine">(writes, "deleteEngine");
export const saveCheck = later<typeof Writes, "saveCheck">(writes, "saveCheck");
export const setCheckStatus = later<typeof Writes, "setCheckStatus">(writes, "setCheckStatus");
export const saveReading = later<typeof Writes, "saveReading">(writes, "saveReading");
export const importChecks = later<typeof Writes, "importChecks">(writes, "importChecks");
export const saveTrayItem = later<typeof Writes, "saveTrayItem">(writes, "saveTrayItem");
export const adjustTray = later<typeof Writes, "adjustTray">(writes, "adjustTray");
export const beginFit = later<typeof Writes, "beginFit">(writes, "beginFit");
export const toggleSwap = later<typeof Writes, "toggleSwap">(writes, "toggleSwap");
export const toggleSwaps = later<typeof Writes, "toggleSwaps">(writes, "toggleSwaps");
export const toggleFitTask = later<typeof Writes, "toggleFitTask">(writes, "toggleFitTask");
export const setTurned = later<typeof Writes, "setTurned">(writes, "setTurned");
export const addComment = later<typeof Writes, "addComment">(writes, "addComment");
export const giveVerdict = later<typeof Writes, "giveVerdict">(writes, "giveVerdict");
export const offerToClub = later<typeof Writes, "offerToClub">(writes, "offerToClub");
export const withdrawOffer = later<typeof Writes, "withdrawOffer">(writes, "withdrawOffer");
export const askToBorrow = later<typeof Writes, "askToBorrow">(writes, "askToBorrow");
export const moveLoan = later<typeof Writes, "moveLoan">(writes, "moveLoan");
export const queuePhoto = later<typeof Photos, "queuePhoto">(photos, "queuePhoto");
export const getMeta = later<typeof LocalDbModule, "getMeta">(localDb, "getMeta");

/** Start loading the writes now (the local database's module does, once it is up). */
export function preloadWrites(): void {
  void writes();
  void photos();
}
