import type * as Save from "./save";
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

const save = () => import("./save");
const photos = () => import("./photos");
const localDb = () => import("./local-db");

export const saveEngine = later<typeof Save, "saveEngine">(save, "saveEngine");
export const deleteEngine = later<typeof Save, "deleteEngine">(save, "deleteEngine");
export const saveCheck = later<typeof Save, "saveCheck">(save, "saveCheck");
export const setCheckStatus = later<typeof Save, "setCheckStatus">(save, "setCheckStatus");
export const saveReading = later<typeof Save, "saveReading">(save, "saveReading");
export const importChecks = later<typeof Save, "importChecks">(save, "importChecks");
export const saveTrayItem = later<typeof Save, "saveTrayItem">(save, "saveTrayItem");
export const adjustTray = later<typeof Save, "adjustTray">(save, "adjustTray");
export const beginFit = later<typeof Save, "beginFit">(save, "beginFit");
export const toggleSwap = later<typeof Save, "toggleSwap">(save, "toggleSwap");
export const toggleSwaps = later<typeof Save, "toggleSwaps">(save, "toggleSwaps");
export const toggleFitTask = later<typeof Save, "toggleFitTask">(save, "toggleFitTask");
export const setTurned = later<typeof Save, "setTurned">(save, "setTurned");
export const addComment = later<typeof Save, "addComment">(save, "addComment");
export const giveVerdict = later<typeof Save, "giveVerdict">(save, "giveVerdict");
export const offerToClub = later<typeof Save, "offerToClub">(save, "offerToClub");
export const withdrawOffer = later<typeof Save, "withdrawOffer">(save, "withdrawOffer");
export const askToBorrow = later<typeof Save, "askToBorrow">(save, "askToBorrow");
export const moveLoan = later<typeof Save, "moveLoan">(save, "moveLoan");
export const queuePhoto = later<typeof Photos, "queuePhoto">(photos, "queuePhoto");
export const getMeta = later<typeof LocalDbModule, "getMeta">(localDb, "getMeta");

/** Start loading the writes now (the local database's module does, once it is up). */
export function preloadWrites(): void {
  void save();
  void photos();
}
