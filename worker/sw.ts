/// <reference lib="webworker" />
import { defaultCache } from "@serwist/turbopack/worker";
import { NetworkOnly, Serwist, type PrecacheEntry, type SerwistGlobalConfig } from "serwist";
import { RSC_CACHE, SHELL_PARAMS, SHELL_PATHS } from "../lib/offline/shells";

declare global {
  interface WorkerGlobalScope extends SerwistGlobalConfig {
    __SW_MANIFEST: (PrecacheEntry | string)[] | undefined;
  }
}
declare const self: ServiceWorkerGlobalScope;

const shells = new Set<string>(SHELL_PATHS);

/**
 * Client-side navigation asks for a page's RSC payload with a cache-busting query that changes
 * with the page you come from, so the precache (keyed by URL) never matches it. Fetch each shell's
 * payload at install, store it by path, and answer RSC requests for shells from it when offline.
 */
async function cacheShellPayloads() {
  const cache = await caches.open(RSC_CACHE);
  await Promise.all(
    SHELL_PATHS.map(async (p) => {
      const res = await fetch(p, { headers: { RSC: "1" }, credentials: "same-origin" });
      if (res.ok) await cache.put(p, new Response(await res.blob(), { status: 200, headers: res.headers }));
    }),
  );
}

async function shellPayload({ request, url }: { request: Request; url: URL }): Promise<Response> {
  const prefetch = request.headers.has("next-router-prefetch");
  try {
    const res = await fetch(request);
    if (res.ok && !prefetch) {
      const copy = res.clone();
      void caches.open(RSC_CACHE).then(async (c) => c.put(url.pathname, new Response(await copy.blob(), { status: 200, headers: copy.headers })));
    }
    return res;
  } catch (e) {
    // a prefetch may fail quietly; a real navigation gets the stored payload
    const cached = prefetch ? undefined : await (await caches.open(RSC_CACHE)).match(url.pathname);
    // A fresh Response takes the request's URL; the stored one carries the shell's own URL, and
    // the router would read that difference as a redirect and drop the record's id from the address.
    if (cached) return new Response(await cached.blob(), { status: 200, headers: cached.headers });
    throw e;
  }
}

const serwist = new Serwist({
  precacheEntries: self.__SW_MANIFEST,
  precacheOptions: { ignoreURLParametersMatching: SHELL_PARAMS, cleanupOutdatedCaches: true },
  skipWaiting: true,
  clientsClaim: true,
  navigationPreload: false,
  runtimeCaching: [
    // the API and sign-in are never served from a cache: stale data or another user's would be worse than none
    { matcher: ({ url, sameOrigin }) => sameOrigin && url.pathname.startsWith("/api/"), handler: new NetworkOnly() },
    { matcher: ({ request, url, sameOrigin }) => sameOrigin && request.headers.get("RSC") === "1" && shells.has(url.pathname), handler: shellPayload },
    ...defaultCache,
  ],
  fallbacks: { entries: [{ url: "/offline", matcher: ({ request }) => request.destination === "document" }] },
});

self.addEventListener("install", (event) => event.waitUntil(cacheShellPayloads().catch(() => undefined)));

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

serwist.addEventListeners();
