import type { LocalDb } from "@/lib/sync/local-db";
import { queueChange } from "@/lib/sync/outbox";

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
