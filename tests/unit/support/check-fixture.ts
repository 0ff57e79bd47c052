import type { LocalEngine, LocalReading } from "@/lib/sync/local-db";
import { ENGINE_FOUR } from "../../fixtures/engines";

/**
 * The phone's copy of an invented engine (test data, not trade data): the four of
 * tests/fixtures/engines.ts with placeholder timing, measured cold, a 2.60 assembled shim, mm and km,
 * not mirrored, where the shims sit not said, the exhausts nearest the mechanic. A test passes what
 * its own engine has otherwise (another layout, bands, shim position), so each file still reads as
 * the engine it checks.
 */
export const localEngine = (over: Partial<LocalEngine> = {}): LocalEngine => ({
  id: "0b6f5c2e-2222-4a4a-9a9a-000000000001",
  ...structuredClone(ENGINE_FOUR),
  firingAngles: null,
  timing: { ivo: 20, ivc: 50, evo: 50, evc: 20 },
  measuredHot: false,
  shimDiameter: null,
  assembledShim: 2.6,
  displayUnit: "mm",
  odometerUnit: "km",
  mirrored: false,
  shimPosition: null,
  nearSide: "exhaust",
  ...over,
});

/** One intake and one exhaust per cylinder, fired in the order given: the invented single and twin. */
export const oneValveEach = (name: string, firingOrder: number[]) => ({
  name,
  cylinders: firingOrder.length,
  intakePerCylinder: 1,
  exhaustPerCylinder: 1,
  firingOrder,
});

/** What a reading holds before anything is measured, micrometered or fitted. */
const UNREAD = { installedMicrometer: null, feelerGo: null, feelerNoGo: null, measured: null, fittedShim: null };

/** A first-round reading by blade on check "c" of a valve whose installed shim is stamped 2.60. */
export const localReading = (valve: string, over: Partial<LocalReading> = {}): LocalReading => ({
  checkId: "c",
  valve,
  round: 0,
  installedStamp: 2.6,
  method: "feeler",
  ...UNREAD,
  ...over,
});

/** A reading by blade: the blade that went is the clearance measured. */
export const feelerReading = (
  valve: string,
  installed: number,
  measured: number | null,
  over: Partial<LocalReading> = {},
): LocalReading => localReading(valve, { installedStamp: installed, feelerGo: measured, measured, ...over });
