import { openLocalDb, type LocalDb, type LocalReading } from "@/lib/sync/local-db";
import { queueChange } from "@/lib/sync/outbox";
import { saveCheck, saveReading } from "@/lib/sync/save";

/** A pull page with nothing in it; a fake server adds its cursor (and any rows it sends). */
export const EMPTY_PAGE = { engines: [], checks: [], readings: [], tray: [], comments: [], tombstones: [] };

/**
 * A blade reading made on the phone as the measure screen makes it: put in the phone's database and
 * queued as "reading.put/1" in the same change. The blade that went is the clearance measured.
 */
export async function queueReading(
  db: LocalDb,
  checkId: string,
  blade: { valve: string; round: number; feelerGo: number },
) {
  const reading = { ...blade, method: "feeler" as const };
  await queueChange(db, "reading.put/1", { checkId, reading } as never, async () => {
    await db.readings.put({
      checkId,
      installedStamp: null,
      installedMicrometer: null,
      feelerNoGo: null,
      measured: reading.feelerGo,
      fittedShim: null,
      ...reading,
    });
  });
}

/** A new phone with a bare engine, a check on it at 1,000 km and one reading saved: where a Fit step starts. */
export async function phoneWithReading(engineId: string, checkId: string, reading: LocalReading): Promise<LocalDb> {
  const db = openLocalDb(crypto.randomUUID());
  await db.engines.put({ id: engineId } as never);
  await saveCheck(db, { id: checkId, engineId, odometer: 1000, measuredHot: false });
  await saveReading(db, checkId, reading);
  return db;
}
