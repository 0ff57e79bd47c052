"use client";

import { useLiveQuery } from "@/components/sync/use-live-query";
import { useCallback, useMemo } from "react";
import { engineSizes, valveViews, type ValveView } from "@/lib/check/derive";
import { lastShims, previousCheck } from "@/lib/check/previous";
import type { LocalCheck, LocalEngine, LocalReading, LocalTrayItem } from "@/lib/sync/local-db";
import { saveReading } from "@/lib/sync/later";
import { useLocalCore } from "@/components/sync/local-provider";
import type { ReadingEntry } from "./valve-card";

export interface CheckData {
  check: LocalCheck;
  engine: LocalEngine;
  readings: LocalReading[];
  tray: LocalTrayItem[];
  /** each bucket's shim as the previous check of this engine left it */
  previous: Map<string, number>;
  /** a closed check of this engine at a higher odometer: this one is out of date */
  laterClosed: LocalCheck | null;
}

/**
 * A check and all it needs from the phone's database, kept live: undefined while loading, null
 * when the check (or its engine) is not on this phone.
 */
export function useCheckData(id: string): CheckData | null | undefined {
  const { db } = useLocalCore();
  // two live queries: a blade tap changes this check's readings only, so only they are read again,
  // and the engine, check and tray keep their identity (the cards compare them cheaply)
  const rest = useLiveQuery(async () => {
    if (!db) return undefined;
    const check = await db.checks.get(id);
    if (!check) return null;
    const [engine, tray, checks] = await Promise.all([
      db.engines.get(check.engineId),
      db.tray.toArray(),
      db.checks.where("engineId").equals(check.engineId).toArray(),
    ]);
    if (!engine) return null;
    const before = previousCheck(check, checks);
    const previous = lastShims(before ? await db.readings.where("checkId").equals(before.id).toArray() : []);
    const laterClosed =
      checks
        .filter((c) => c.id !== check.id && c.status === "closed" && c.odometer > check.odometer)
        .sort((a, b) => b.odometer - a.odometer)[0] ?? null;
    return { check, engine, tray, previous, laterClosed };
  }, [db, id]);
  const readings = useLiveQuery(
    async () => (db ? db.readings.where("checkId").equals(id).toArray() : undefined),
    [db, id],
  );
  return useMemo(
    () => (rest === null ? null : rest === undefined || readings === undefined ? undefined : { ...rest, readings }),
    [rest, readings],
  );
}

/** What every step reads from the data: the engine's shim sizes and series step, and each valve's view. */
export function useCheckModel({ engine, readings, previous }: Pick<CheckData, "engine" | "readings" | "previous">) {
  const sizes = useMemo(() => engineSizes(engine), [engine]);
  const seriesStep = "step" in engine.shims ? engine.shims.step : 0.05;
  const views: ValveView[] = useMemo(
    () => valveViews(engine, readings, (v) => previous.get(v) ?? engine.assembledShim),
    [engine, readings, previous],
  );
  return { sizes, seriesStep, views };
}

/** A new measurement of one valve, saved in the round it belongs to. */
export function useSaveReading(checkId: string) {
  const { db } = useLocalCore();
  return useCallback(
    (v: ValveView) => async (r: ReadingEntry) => {
      if (!db) return;
      await saveReading(db, checkId, { valve: v.valve.id, round: v.nextRound, fittedShim: null, ...r });
    },
    [db, checkId],
  );
}
