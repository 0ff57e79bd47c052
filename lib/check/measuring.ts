import { LashInputError, rotationGuide, valveNames, type RotationStep } from "../lash";

export interface MeasuringOrder {
  /** the crank positions of the rotation guide, in turning order */
  positions: RotationStep[];
  /** every valve once, in the order it is measured, with the position it is measured at */
  stops: { valveId: string; position: number }[];
  /** why there is no guide (the valves are then listed cylinder by cylinder) */
  problem?: string;
}

type Layout = Parameters<typeof valveNames>[0] & {
  firingOrder: number[];
  firingAngles: number[] | null;
  timing: Parameters<typeof rotationGuide>[0]["timing"];
};

/**
 * The measuring mode's path: position by position as the rotation guide turns the crank, and at
 * each position the intakes then the exhausts, cylinder by cylinder, each valve of a cylinder in turn.
 */
export function measuringOrder(engine: Layout): MeasuringOrder {
  const valves = valveNames(engine);
  let positions: RotationStep[];
  try {
    positions = rotationGuide({
      firingOrder: engine.firingOrder,
      firingAngles: engine.firingAngles ?? undefined,
      timing: engine.timing,
    }).steps;
  } catch (e) {
    const problem =
      e instanceof LashInputError
        ? `No rotation guide for this engine: ${e.message}.`
        : "No rotation guide for this engine: check its firing order and timing.";
    return { positions: [], stops: valves.map((v) => ({ valveId: v.id, position: 0 })), problem };
  }
  const stops = positions.flatMap((p, position) =>
    p.valves.flatMap((ref) =>
      valves
        .filter((v) => v.cylinder === ref.cylinder && v.kind === ref.kind)
        .map((v) => ({ valveId: v.id, position })),
    ),
  );
  return { positions, stops };
}

/** "Turn to cylinder 1 firing TDC (compression), then measure intake 1, 2; exhaust 1, 3" */
export function positionWords(p: RotationStep): string {
  const turn =
    p.pastTdc > 0
      ? `Turn to ${p.pastTdc}° past cylinder ${p.tdcCylinder} firing TDC`
      : p.crankAngle === 0
        ? `Turn to cylinder ${p.tdcCylinder} firing TDC (compression)`
        : `Turn on ${p.crankAngle}° to cylinder ${p.tdcCylinder} firing TDC`;
  const which = (["intake", "exhaust"] as const)
    .map((k) => {
      const cyl = p.valves.filter((v) => v.kind === k).map((v) => v.cylinder);
      return cyl.length ? `${k} ${cyl.join(", ")}` : "";
    })
    .filter(Boolean)
    .join("; ");
  return `${turn}, then measure ${which}`;
}
