import { compareLengths, toNm } from "../lash";

/**
 * Which of a club's offered shims can serve an engine. A shim only fits the same shim system, so
 * an offer counts when its diameter matches the engine's (to 0.01 mm). An offer or an engine with
 * no diameter stated cannot be matched safely: it is listed as not fitting, with the reason, so the
 * plan can say why a size that is on offer was not used. One's own offers are one's tray already.
 */
export interface PoolOffer {
  id: string;
  size: number;
  count: number;
  ownerId: string;
  ownerName: string;
  shimDiameter: number | null;
  note?: string | null;
}

export interface PoolFit {
  pool: { size: number; count: number; ownerId: string }[];
  wrongSystem: (PoolOffer & { reason: string })[];
}

// less than half of 0.01 mm apart, decided in nanometres: a float difference called 7.485 the same as
// 7.48 but 7.475 not
const DIAMETER_SLACK_NM = toNm(0.005);
const same = (a: number, b: number) => Math.abs(compareLengths(a, b)) < DIAMETER_SLACK_NM;

export function poolForEngine(engine: { shimDiameter: number | null }, offers: PoolOffer[], selfId: string): PoolFit {
  const pool: PoolFit["pool"] = [];
  const wrongSystem: PoolFit["wrongSystem"] = [];
  for (const o of offers) {
    if (o.ownerId === selfId || o.count <= 0) continue;
    if (engine.shimDiameter == null) wrongSystem.push({ ...o, reason: "this engine's shim diameter is not set" });
    else if (o.shimDiameter == null) wrongSystem.push({ ...o, reason: "the offer does not say its shim diameter" });
    else if (!same(o.shimDiameter, engine.shimDiameter))
      wrongSystem.push({ ...o, reason: `${o.shimDiameter} mm shims, this engine takes ${engine.shimDiameter} mm` });
    else pool.push({ size: o.size, count: o.count, ownerId: o.ownerId });
  }
  return { pool, wrongSystem };
}

/**
 * The tray shims the plan may use for an engine: one's own tray, so a shim with no diameter noted is
 * trusted; one whose noted diameter differs from the engine's is left out and counted, so the plan
 * can say so.
 */
export function trayForEngine<T extends { size: number; count: number; shimDiameter: number | null }>(
  engine: { shimDiameter: number | null },
  tray: T[],
): { usable: T[]; otherSystem: number } {
  const usable: T[] = [];
  let otherSystem = 0;
  for (const t of tray) {
    if (t.count <= 0) continue;
    if (engine.shimDiameter != null && t.shimDiameter != null && !same(t.shimDiameter, engine.shimDiameter))
      otherSystem += t.count;
    else usable.push(t);
  }
  return { usable, otherSystem };
}
