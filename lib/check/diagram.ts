import type { NearSide, ValveName } from "../lash";

/**
 * The engine diagram's layout: each cylinder one group (its label, the far side's valves on top and
 * the near side's below), groups side by side and wrapped into balanced rows so that no row is wider
 * than the screen. Cells have one fixed size whatever their state, so the layout never shifts.
 * A cell is a 44 px target with 8 px between cells, for a gloved finger (WCAG 2.5.8 asks 24 px; 44 px
 * is the common practice for touch and WCAG 2.5.5's figure).
 */
export const CELL_PX = 44;
export const CELL_GAP_PX = 8;
/** padding and border of a cylinder's group, both sides together */
export const GROUP_FRAME_PX = 10;
export const GROUP_GAP_PX = 8;

/** How the mechanic stands to the engine: cylinder 1 on their right (mirrored) or left, and which side is nearest them. */
export interface Facing {
  mirrored: boolean;
  nearSide: NearSide;
}

/** An engine's facing; one kept from before the profile asked has its exhausts nearest (drawn at the bottom, as always). */
export const facingOf = (e: { mirrored: boolean; nearSide?: NearSide | null }): Facing => ({
  mirrored: e.mirrored,
  nearSide: e.nearSide ?? "exhaust",
});

export interface CylinderGroup<V> {
  cylinder: number;
  /** the side farthest from the mechanic, drawn on top */
  top: V[];
  /** the side nearest the mechanic, drawn at the bottom */
  bottom: V[];
}

/** The width of one cylinder's group with this many valves side by side. */
export const groupWidth = (across: number) => across * CELL_PX + (across - 1) * CELL_GAP_PX + GROUP_FRAME_PX;

/**
 * The one drawing order of an engine seen from above, shared by the phone's diagram, the mentor's
 * review and the printed worksheet, so a shim read off paper goes into the bucket the phone showed.
 * Cylinders left to right: 1 on the left, or on the right when the engine faces the other way. Inside
 * a cylinder the valves are numbered from the cylinder-1 end, so they turn round with it (mirrored:
 * I1.2 left of I1.1). The far side's valves on top, the near side's at the bottom.
 */
export function drawingOrder<V extends { valve: ValveName }>(
  views: V[],
  facing: Facing,
): { top: NearSide; bottom: NearSide; cylinders: CylinderGroup<V>[] } {
  const order = facing.mirrored ? -1 : 1;
  const bottom = facing.nearSide;
  const top: NearSide = bottom === "exhaust" ? "intake" : "exhaust";
  const byCyl = new Map<number, CylinderGroup<V>>();
  for (const v of views) {
    const g = byCyl.get(v.valve.cylinder) ?? { cylinder: v.valve.cylinder, top: [], bottom: [] };
    (v.valve.kind === top ? g.top : g.bottom).push(v);
    byCyl.set(v.valve.cylinder, g);
  }
  const cylinders = [...byCyl.values()].sort((a, b) => order * (a.cylinder - b.cylinder));
  for (const g of cylinders)
    for (const side of [g.top, g.bottom]) side.sort((a, b) => order * (a.valve.index - b.valve.index));
  return { top, bottom, cylinders };
}

/**
 * The drawing order cut into rows that fit the width: as few rows as fit, then as even as possible
 * (6 cylinders as 3 and 3, not 4 and 2).
 */
export function diagramRows<V extends { valve: ValveName }>(
  views: V[],
  facing: Facing,
  widthPx: number,
): CylinderGroup<V>[][] {
  const groups = drawingOrder(views, facing).cylinders;
  if (groups.length === 0) return [];
  const across = Math.max(...groups.map((g) => Math.max(g.top.length, g.bottom.length)));
  const perRowMax = Math.max(1, Math.floor((widthPx + GROUP_GAP_PX) / (groupWidth(across) + GROUP_GAP_PX)));
  const rows = Math.ceil(groups.length / perRowMax);
  const perRow = Math.ceil(groups.length / rows);
  const out: CylinderGroup<V>[][] = [];
  for (let i = 0; i < groups.length; i += perRow) out.push(groups.slice(i, i + perRow));
  return out;
}

/**
 * The valves as drawn, read as a mechanic reads the picture: the top row across every cylinder
 * left to right, then the bottom row. Tests compare the three drawings by it.
 */
export function drawnValveOrder(views: { valve: ValveName }[], facing: Facing): { top: string[]; bottom: string[] } {
  const { cylinders } = drawingOrder(views, facing);
  return {
    top: cylinders.flatMap((g) => g.top.map((v) => v.valve.id)),
    bottom: cylinders.flatMap((g) => g.bottom.map((v) => v.valve.id)),
  };
}
