"use client";

import { useEffect, useMemo, useReducer, useRef } from "react";
import { useLocalCore } from "./local-provider";

/** Dexie's liveQuery, as the local database's module (loaded behind the first paint) hands it over. */
type Live = <T>(querier: () => T | Promise<T>) => {
  subscribe(next: (v: T) => void, error?: (e: unknown) => void): { unsubscribe(): void };
  getValue?(): T;
  hasValue?(): boolean;
};

/**
 * A Dexie live query as a hook, without importing Dexie: until the local database has loaded (and
 * on a page that never loads it) it answers the default, then the query's result, kept up to date.
 * The same contract as dexie-react-hooks' useLiveQuery (a previous result is kept while the
 * dependencies change; an error is thrown to the nearest error boundary).
 */
export function useLiveQuery<T, D = undefined>(
  querier: () => T | Promise<T>,
  deps: unknown[],
  defaultResult?: D,
  liveOverride?: Live,
): T | D {
  const { live: fromContext } = useLocalCore();
  const live = (liveOverride ?? fromContext) as Live | null;
  const monitor = useRef<{ hasResult: boolean; result: T | D; error: unknown }>({
    hasResult: false,
    result: defaultResult as D,
    error: null,
  });
  const [, rerender] = useReducer((x: number) => x + 1, 0);
  const observable = useMemo(
    () => {
      if (!live) return null;
      const o = live(querier);
      // a value the observable already holds is shown on the first render, as dexie-react-hooks does
      if (!monitor.current.hasResult && (typeof o.hasValue !== "function" || o.hasValue())) {
        if (typeof o.getValue === "function") {
          monitor.current.result = o.getValue();
          monitor.current.hasResult = true;
        } else {
          o.subscribe((v) => {
            monitor.current.result = v;
            monitor.current.hasResult = true;
          }).unsubscribe();
        }
      }
      return o;
    },
    // eslint-disable-next-line react-hooks/exhaustive-deps, react-hooks/use-memo -- the caller's dependencies, as with useMemo
    [live, ...deps],
  );
  useEffect(() => {
    if (!observable) return;
    const sub = observable.subscribe(
      (v) => {
        const m = monitor.current;
        if (m.error !== null || m.result !== v) {
          m.error = null;
          m.result = v;
          m.hasResult = true;
          rerender();
        }
      },
      (e) => {
        if (monitor.current.error !== e) {
          monitor.current.error = e;
          rerender();
        }
      },
    );
    return () => sub.unsubscribe();
  }, [observable]);
  // eslint-disable-next-line react-hooks/refs -- the kept result is read while rendering by design
  if (monitor.current.error) throw monitor.current.error;
  // eslint-disable-next-line react-hooks/refs
  return monitor.current.result;
}
