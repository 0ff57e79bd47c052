/**
 * The pages used in the garage: static shells whose HTML and RSC payload are the same for every
 * record (the id is read on the client), precached by the service worker so they open offline.
 */
export const SHELL_PATHS = [
  "/",
  "/engines",
  "/engine",
  "/engine/edit",
  "/check",
  "/checks",
  "/tray",
  "/review",
  "/club",
  "/account",
  "/offline",
] as const;

/** Query parameters that name a record; the precache ignores them when matching a shell. */
export const SHELL_PARAMS = [/^id$/, /^engine$/, /^valve$/, /^step$/];

/** The shells' page data, one cache per build: `${RSC_CACHE}-${build}` (a build never serves another's). */
export const RSC_CACHE = "lashwright-shell-rsc";

/** The hashed files of a build no longer current, kept while a page of that build is open. */
export const PREVIOUS_CACHE = "lashwright-previous";

/** Messages between the pages and the worker. */
export const SKIP_WAITING = "SKIP_WAITING";
