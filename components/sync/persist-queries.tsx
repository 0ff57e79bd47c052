"use client";

import { useQueryClient } from "@tanstack/react-query";
import { persistQueryClient } from "@tanstack/react-query-persist-client";
import { createAsyncStoragePersister } from "@tanstack/query-async-storage-persister";
import { del, get, set } from "idb-keyval";
import { useEffect } from "react";

/**
 * Keeps the server data the screens read through the API (shared checks under review, their
 * comments, photos' list, clubs and queues) in IndexedDB, one copy per user, so a mentor can read
 * a check in a garage with no signal. The garage's own records live in the Dexie database instead.
 */
const KEPT = new Set(["checks", "clubs"]);
const WEEKS_4 = 28 * 24 * 3600 * 1000;

export function PersistQueries({ userId }: { userId: string | null }) {
  const qc = useQueryClient();
  useEffect(() => {
    if (!userId) return;
    const persister = createAsyncStoragePersister({
      storage: { getItem: get, setItem: set, removeItem: del },
      key: `lashwright-cache-${userId}`,
      throttleTime: 1000,
    });
    const [unsubscribe] = persistQueryClient({
      queryClient: qc,
      persister,
      maxAge: WEEKS_4,
      dehydrateOptions: {
        shouldDehydrateQuery: (q) => q.state.status === "success" && KEPT.has(String(q.queryKey[0])),
      },
    });
    return () => {
      unsubscribe();
      // another person signing in on this phone must not see this one's data
      qc.clear();
    };
  }, [qc, userId]);
  return null;
}
