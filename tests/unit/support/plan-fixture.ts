import fc from "fast-check";
import { shimSeries, type PlanValve } from "@/lib/lash";

/** The planner tests' invented engine: shims 2.50 to 3.30 by 0.05 (17 sizes), every valve in one band. */
export const series = shimSeries(2.5, 3.3, 0.05);
export const spec = { min: 0.2, max: 0.3 };

/** Valves in `spec`, one a row: id, the shim installed, the gap measured (mm). */
export const valvesOf = (rows: [id: string, installed: number, measured: number][]): PlanValve[] =>
  rows.map(([id, installed, measured]) => ({ id, installed, measured, spec }));

/** Random valves V0, V1, ... in `spec`: a series size installed each, and a gap of `um` whole µm measured. */
export const randomValves = (maxLength: number, um: { min: number; max: number }) =>
  fc
    .array(fc.record({ i: fc.integer({ min: 0, max: 16 }), um: fc.integer(um) }), { minLength: 1, maxLength })
    .map((vs) => valvesOf(vs.map((v, k) => [`V${k}`, series[v.i]!, v.um / 1000])));

/** A random tray: up to maxLength rows of a series size, each 0 to maxCount shims. */
export const randomTray = (maxLength: number, maxCount: number) =>
  fc
    .array(fc.record({ i: fc.integer({ min: 0, max: 16 }), count: fc.integer({ min: 0, max: maxCount }) }), {
      maxLength,
    })
    .map((rows) => rows.map((t) => ({ size: series[t.i]!, count: t.count })));

/** A random club pool: up to maxLength offers of a series size, 0 to 2 shims each, by one of the owners. */
export const randomPool = (owners: string[], maxLength: number) =>
  fc
    .array(
      fc.record({
        i: fc.integer({ min: 0, max: 16 }),
        count: fc.integer({ min: 0, max: 2 }),
        owner: fc.constantFrom(...owners),
      }),
      { maxLength },
    )
    .map((rows) => rows.map((t) => ({ size: series[t.i]!, count: t.count, ownerId: t.owner })));
