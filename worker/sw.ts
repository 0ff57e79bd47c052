/// <reference lib="webworker" />
import { defaultCache } from "@serwist/turbopack/worker";
import { NetworkOnly, Serwist, type PrecacheEntry, type SerwistGlobalConfig } from "serwist";
import { PREVIOUS_CACHE, RSC_CACHE, SHELL_PARAMS, SHELL_PATHS } from "../lib/offline/shells";

declare global {
  interface WorkerGlobalScope extends SerwistGlobalConfig {
    __SW_MANIFEST: (PrecacheEntry | string)[] | undefined;
  }
}
declare const self: ServiceWorkerGlobalScope;

const shells = new Set<string>(SHELL_PATHS);
const manifest = self.__SW_MANIFEST ?? [];

/** This build's name: the shells' revision, which app/serwist/[path]/route.ts makes anew per build. */
const BUILD =
  manifest.map((e) => (typeof e === "string" ? null : e.url === "/" ? e.revision : null)).find(Boolean) ?? "dev";
const RSC_THIS = `${RSC_CACHE}-${BUILD}`;
/** Where the clients of a previous build are listed, inside that build's previous cache. */
const CLIENTS_KEY = "/__lashwright/clients";

/**
 * Client-side navigation asks for a page's RSC payload with a cache-busting query that changes
 * with the page you come from, so the precache (keyed by URL) never matches it. Fetch each shell's
 * payload at install, past the HTTP cache (which may hold the previous build's), store it by path
 * in this build's own cache, and answer RSC requests for shells from it when offline. A payload
 * that cannot be fetched fails the install: the worker installs again at the next update check,
 * rather than serving another build's page data, or none, in the garage.
 */
async function cacheShellPayloads() {
  await caches.delete(RSC_THIS);
  const cache = await caches.open(RSC_THIS);
  await Promise.all(
    SHELL_PATHS.map(async (p) => {
      const res = await fetch(p, { headers: { RSC: "1" }, credentials: "same-origin", cache: "no-store" });
      if (!res.ok) throw new Error(`shell ${p} answered ${res.status}`);
      await cache.put(p, new Response(await res.blob(), { status: 200, headers: res.headers }));
    }),
  );
}

interface PreviousBuild {
  build: string;
  clients: string[];
}

async function previousBuilds(): Promise<{ cache: string; meta: PreviousBuild }[]> {
  const names = (await caches.keys()).filter((k) => k.startsWith(`${PREVIOUS_CACHE}-`));
  const out: { cache: string; meta: PreviousBuild }[] = [];
  for (const name of names) {
    const res = await (await caches.open(name)).match(CLIENTS_KEY);
    out.push({
      cache: name,
      meta: res ? ((await res.json()) as PreviousBuild) : { build: name.slice(PREVIOUS_CACHE.length + 1), clients: [] },
    });
  }
  return out;
}

/** The build a page runs, when it is a previous one (its id was listed when the new build took over). */
async function previousBuildOf(clientId: string | undefined): Promise<string | null> {
  if (!clientId) return null;
  for (const p of await previousBuilds()) if (p.meta.clients.includes(clientId)) return p.meta.build;
  return null;
}

async function shellPayload({
  request,
  url,
  event,
}: {
  request: Request;
  url: URL;
  event: ExtendableEvent;
}): Promise<Response> {
  const prefetch = request.headers.has("next-router-prefetch");
  const clientId = (event as FetchEvent).clientId;
  try {
    const res = await fetch(request);
    const old = await previousBuildOf(clientId);
    if (res.ok && !prefetch && !old) {
      const copy = res.clone();
      void caches
        .open(RSC_THIS)
        .then(async (c) =>
          c.put(url.pathname, new Response(await copy.blob(), { status: 200, headers: copy.headers })),
        );
    }
    return res;
  } catch (e) {
    // a prefetch may fail quietly; a real navigation gets the stored payload of the page's own build
    const old = prefetch ? null : await previousBuildOf(clientId);
    const cached = prefetch
      ? undefined
      : await (await caches.open(old ? `${RSC_CACHE}-${old}` : RSC_THIS)).match(url.pathname);
    // A fresh Response takes the request's URL; the stored one carries the shell's own URL, and
    // the router would read that difference as a redirect and drop the record's id from the address.
    if (cached) return new Response(await cached.blob(), { status: 200, headers: cached.headers });
    throw e;
  }
}

/**
 * A page still running a previous build asks for that build's hashed files (a step's code, loaded
 * when the step is first shown). Hashed names never change meaning, so the kept copy is served
 * first; the network is asked only for what no cache has.
 */
async function previousStatic({ request }: { request: Request }): Promise<Response> {
  for (const p of await previousBuilds()) {
    const hit = await (await caches.open(p.cache)).match(request, { ignoreVary: true });
    if (hit) return hit;
  }
  return fetch(request);
}

const serwist = new Serwist({
  precacheEntries: manifest,
  precacheOptions: { ignoreURLParametersMatching: SHELL_PARAMS, cleanupOutdatedCaches: true },
  // No takeover under a mechanic's finger: a new build waits until a page asks for it (the "new
  // version" notice, on a tap: serwist answers the SKIP_WAITING message) or no page is open. The
  // very first install claims the open page (see the activate listener), so offline works at once.
  skipWaiting: false,
  clientsClaim: false,
  navigationPreload: false,
  runtimeCaching: [
    // the API and sign-in are never served from a cache: stale data or another user's would be worse than none
    { matcher: ({ url, sameOrigin }) => sameOrigin && url.pathname.startsWith("/api/"), handler: new NetworkOnly() },
    {
      matcher: ({ request, url, sameOrigin }) =>
        sameOrigin && request.headers.get("RSC") === "1" && shells.has(url.pathname),
      handler: shellPayload,
    },
    // this build's own files are answered by the precache before this; what reaches here is another build's
    {
      matcher: ({ url, sameOrigin }) => sameOrigin && url.pathname.startsWith("/_next/static/"),
      handler: previousStatic,
    },
    ...defaultCache,
  ],
  fallbacks: { entries: [{ url: "/offline", matcher: ({ request }) => request.destination === "document" }] },
});

/**
 * Whether this worker replaces another. Only a first install claims the open pages: an update moves
 * them to the new worker when it activates, and claiming then only adds work to the moment the old
 * worker is let go (pages opened since, by then controlled by nothing, wait for their next load).
 * Lost if the worker is stopped between install and activate: then it claims, as before.
 */
let replacing = false;
self.addEventListener("install", (event) => {
  replacing = self.registration.active !== null;
  event.waitUntil(
    (async () => {
      await cacheShellPayloads();
      // no window open: nothing runs the old build, so take over now
      const windows = await self.clients.matchAll({ type: "window", includeUncontrolled: true });
      if (windows.length === 0) await self.skipWaiting();
    })(),
  );
});

/**
 * Before the precache drops the previous build's entries, copy its hashed files into a cache of
 * their own, with the list of pages open now (they run the previous build). It is deleted once
 * none of those pages is left, as are that build's page data and any older build's.
 */
async function keepPreviousBuild() {
  const precache = await caches.open(serwist.precacheStrategy.cacheName);
  const current = new Set(serwist.getPrecachedUrls().map((u: string) => new URL(u, self.location.href).pathname));
  const stale = (await precache.keys()).filter((r) => {
    const u = new URL(r.url);
    return u.pathname.startsWith("/_next/static/") && !current.has(u.pathname);
  });
  const open = (await self.clients.matchAll({ type: "window", includeUncontrolled: true })).map((c) => c.id);
  // with no page open nothing runs the previous build; with no file of its own it still has its page data to keep
  if (open.length === 0) return;
  // the build that ran until now: the one whose page data is here and not yet a previous build's
  const known = new Set((await previousBuilds()).map((p) => p.meta.build));
  const rscOld = (await caches.keys())
    .filter((k) => k.startsWith(`${RSC_CACHE}-`) && k !== RSC_THIS)
    .map((k) => k.slice(RSC_CACHE.length + 1));
  const build = rscOld.find((b) => !known.has(b)) ?? `before-${BUILD}`;
  const keep = await caches.open(`${PREVIOUS_CACHE}-${build}`);
  for (const r of stale) {
    const res = await precache.match(r);
    // stored under the plain URL: the page asks for it without the precache's revision parameter
    const u = new URL(r.url);
    u.searchParams.delete("__WB_REVISION__");
    if (res) await keep.put(u.href, res);
  }
  await keep.put(CLIENTS_KEY, Response.json({ build, clients: open } satisfies PreviousBuild));
}

/** Delete the kept files and page data of every build no open page runs any more. */
async function prunePrevious() {
  const alive = new Set((await self.clients.matchAll({ type: "window", includeUncontrolled: true })).map((c) => c.id));
  const builds = await previousBuilds();
  const kept = new Set<string>();
  for (const p of builds) {
    if (p.meta.clients.some((id) => alive.has(id))) kept.add(p.meta.build);
    else await caches.delete(p.cache);
  }
  for (const k of await caches.keys())
    if (k.startsWith(`${RSC_CACHE}-`) && k !== RSC_THIS && !kept.has(k.slice(RSC_CACHE.length + 1)))
      await caches.delete(k);
  // the page data cache of builds before per-build names
  await caches.delete(RSC_CACHE);
}

// serwist's own activate handler deletes the previous build's entries from the precache: it runs
// only once the copy is made (serwist.addEventListeners would start both at once).
self.addEventListener("activate", (event) => {
  event.waitUntil(
    (async () => {
      await keepPreviousBuild().catch((e: unknown) => console.error("[sw] keeping the previous build failed:", e));
      await serwist.handleActivate(event);
      await prunePrevious();
      if (!replacing) await self.clients.claim();
    })(),
  );
});

// A page of a previous build may close at any time: look again when pages come and go.
let lastPrune = 0;
self.addEventListener("fetch", (event) => {
  if (event.request.mode !== "navigate" || Date.now() - lastPrune < 60_000) return;
  lastPrune = Date.now();
  event.waitUntil(prunePrevious().catch(() => undefined));
});

// Background Sync: the queue lives in IndexedDB and the page owns it, so wake the open pages.
self.addEventListener("sync", (event) => {
  const e = event as ExtendableEvent & { tag?: string };
  if (e.tag !== "lashwright-sync") return;
  e.waitUntil(
    self.clients.matchAll({ type: "window" }).then((clients) => {
      for (const c of clients) c.postMessage({ type: "lashwright-sync" });
    }),
  );
});

self.addEventListener("install", serwist.handleInstall);
self.addEventListener("fetch", serwist.handleFetch);
self.addEventListener("message", serwist.handleCache);
