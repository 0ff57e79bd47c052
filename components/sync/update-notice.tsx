"use client";

import { useEffect, useState } from "react";
import { SKIP_WAITING } from "@/lib/offline/shells";
import { useLocal } from "./local-provider";

/**
 * A new build never takes over the page under the mechanic's finger (worker/sw.ts waits): this
 * says one is ready and reloads only on a tap. Every tap is already saved in the phone's database
 * with its outbox entry, so a reload loses nothing. It also says when another window of a newer
 * build asks this one to let go of the phone's database (or this one waits for an older window).
 */
/**
 * Kept for the life of the page, not of the component: the notice is remounted on each client-side
 * navigation, and a page still running the previous build under the new worker (another window
 * took the update) must keep saying so. The controller at page load tells an update from the first
 * install.
 */
let takenOver = false;
/** Seconds the reload waits for the new build to take over before it reloads anyway. */
const TAKEOVER_TRIES = 30;
const onTakeOver = new Set<() => void>();
if (typeof navigator !== "undefined" && navigator.serviceWorker) {
  const hadController = !!navigator.serviceWorker.controller;
  navigator.serviceWorker.addEventListener("controllerchange", () => {
    if (!hadController) return;
    takenOver = true;
    for (const f of onTakeOver) f();
  });
}

export function UpdateNotice() {
  const { dbNotice } = useLocal();
  const [ready, setReady] = useState(takenOver);
  const [reloading, setReloading] = useState(false);

  useEffect(() => {
    const sw = typeof navigator !== "undefined" ? navigator.serviceWorker : undefined;
    if (!sw) return;
    let stop = false;
    const onControllerChange = () => !stop && setReady(true);
    onTakeOver.add(onControllerChange);
    let reg: ServiceWorkerRegistration | undefined;
    const watch = (w: ServiceWorker | null) =>
      w?.addEventListener("statechange", () => w.state === "installed" && sw.controller && !stop && setReady(true));
    const onFound = () => watch(reg?.installing ?? null);
    // a signal again, or the page back in view: a good moment to ask whether a new build is out
    const check = () => navigator.onLine && reg?.update().catch(() => undefined);
    void sw.ready.then((r) => {
      if (stop) return;
      reg = r;
      if (r.waiting && sw.controller) setReady(true);
      watch(r.installing);
      r.addEventListener("updatefound", onFound);
    });
    window.addEventListener("online", check);
    document.addEventListener("visibilitychange", check);
    return () => {
      stop = true;
      onTakeOver.delete(onControllerChange);
      reg?.removeEventListener("updatefound", onFound);
      window.removeEventListener("online", check);
      document.removeEventListener("visibilitychange", check);
    };
  }, []);

  const reload = async () => {
    setReloading(true);
    const sw = navigator.serviceWorker;
    const reg = await sw?.getRegistration();
    if (!reg?.waiting) return window.location.reload();
    // Reload once the new worker has taken over, so the page comes from the new build. The browser
    // lets it take over only once the old worker has no event in hand (every window of the app
    // syncs on reconnect, the moment this tap often follows), and a message to a worker it stopped
    // meanwhile can be lost: ask again each second until it has taken over, then, at worst, reload
    // anyway (the page stays on this build and the notice comes back).
    let done = false;
    const go = () => {
      if (done) return;
      done = true;
      window.location.reload();
    };
    sw.addEventListener("controllerchange", go, { once: true });
    for (let i = 0; i < TAKEOVER_TRIES && !done; i++) {
      const w = reg.waiting;
      if (!w) break; // active already: the controller change is on its way
      w.postMessage({ type: SKIP_WAITING });
      await new Promise((r) => setTimeout(r, 1000));
    }
    if (!done) setTimeout(go, reg.waiting ? 0 : 5_000);
  };

  if (dbNotice === "closed" || dbNotice === "blocked")
    return (
      <div
        role="status"
        className="flex flex-wrap items-center gap-2 rounded-xl border-2 border-accent bg-surface p-2 text-sm"
        data-testid="db-notice"
      >
        <span>
          {dbNotice === "closed"
            ? "A newer version of Lashwright opened in another window and needs this one to reload (your readings are saved)."
            : "Lashwright is open in an older window: close it or reload it to finish the update (your readings are saved)."}
        </span>
        <button
          type="button"
          onClick={() => window.location.reload()}
          className="ml-auto min-h-12 rounded-xl bg-accent px-4 font-bold text-accent-ink"
        >
          Reload
        </button>
      </div>
    );
  if (!ready) return null;
  return (
    <div
      role="status"
      className="flex flex-wrap items-center gap-2 rounded-xl border-2 border-accent bg-surface p-2 text-sm"
      data-testid="update-notice"
    >
      <span>A new version is ready: reload (your readings are saved)</span>
      <button
        type="button"
        disabled={reloading}
        onClick={() => void reload()}
        className="ml-auto min-h-12 rounded-xl bg-accent px-4 font-bold text-accent-ink"
      >
        Reload
      </button>
    </div>
  );
}
