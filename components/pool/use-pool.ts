"use client";

import { useQueries, useQuery, useQueryClient } from "@tanstack/react-query";
import { useLiveQuery } from "@/components/sync/use-live-query";
import { useCallback } from "react";
import { fetchers, queryKeys } from "@/lib/api/client";
import { HOLDING, type ApiOffer } from "@/lib/pool/rules";
import type { MutationArgs } from "@/lib/sync/mutations";
import { useLocalCore } from "@/components/sync/local-provider";

/**
 * The club pools of every club the user is in, their loans, and what of theirs waits in the outbox.
 * Read through the API and kept for offline reading (persist-queries keeps "clubs" queries).
 */
export function usePool({ active = true }: { active?: boolean } = {}) {
  const { db, user, syncNow } = useLocalCore();
  const qc = useQueryClient();
  const clubs = useQuery({ queryKey: queryKeys.clubs(), queryFn: fetchers.clubs, retry: false, enabled: active });
  // loans change on the other side: asked again on every screen that shows them (the kept copy shows meanwhile)
  const pools = useQueries({
    queries: (clubs.data ?? []).map((c) => ({
      queryKey: queryKeys.pool(c.id),
      queryFn: () => fetchers.pool(c.id),
      retry: false,
      refetchOnMount: "always" as const,
      enabled: active,
    })),
  });
  const borrows = useQuery({
    queryKey: queryKeys.borrows(),
    queryFn: fetchers.borrows,
    retry: false,
    refetchOnMount: "always",
    enabled: active,
  });
  // idle, it does not read the outbox either: on the measuring step every tap adds to it
  const outbox = useLiveQuery(async () => (db && active ? db.outbox.toArray() : []), [db, active], []);
  const byId = new Map<string, ApiOffer>();
  for (const p of pools) for (const o of p.data ?? []) byId.set(o.id, o);
  const offers = [...byId.values()];
  const pendingAsks = outbox
    .filter((m) => m.name === "borrow.ask/1")
    .map((m) => m.args as MutationArgs<"borrow.ask/1">);
  const pendingMoves = outbox
    .filter((m) => m.name === "borrow.move/1")
    .map((m) => m.args as MutationArgs<"borrow.move/1">);
  const pendingOffers = outbox
    .filter((m) => m.name === "pool.offer/1")
    .map((m) => m.args as MutationArgs<"pool.offer/1">);
  const refresh = useCallback(async () => {
    await syncNow();
    await qc.invalidateQueries({ queryKey: ["clubs"] });
  }, [qc, syncNow]);
  const mine = (borrows.data ?? []).filter((b) => b.borrowerId === user?.id);
  /** for planning: what is on offer to me, counting back what my own open requests hold */
  const offeredToMe = offers.map((o) => ({
    ...o,
    count:
      o.available +
      mine.filter((b) => b.offerId === o.id && HOLDING.includes(b.state)).reduce((n, b) => n + b.count, 0),
  }));
  return {
    clubs: clubs.data ?? [],
    offers,
    offeredToMe,
    borrows: borrows.data ?? [],
    pendingAsks,
    pendingMoves,
    pendingOffers,
    refresh,
    online: !borrows.isError,
  };
}
