import type { ValveName } from "../lash";

/**
 * The engine diagram's layout: each cylinder one group (its label, its intakes on top and its
 * exhausts below), groups side by side and wrapped into balanced rows so that no row is wider
 * than the screen. Cells have one fixed size whatever their state, so the layout never shifts.
 * A cell is a 44 px target with 8 px between cells, for a gloved finger (WCAG 2.5.8 asks 24 px; 44 px
 * is the common practice for touch and WCAG 2.5.5's figure).
 */
export const CELL_PX = 44;
export const CELL_GAP_PX = 8;
/** padding and border of a cylinder's group, both sides together */
export const GROUP_FRAME_PX = 10;
export const GROUP_GAP_PX = 8;

export interface CylinderGroup<V> {
  cylinder: number;
  intakes: V[];
  exhausts: V[];
}

/** The width of one cylinder's group with this many valves side by side. */
export const groupWidth = (across: number) => across * CELL_PX + (across - 1) * CELL_GAP_PX + GROUP_FRAME_PX;

/**
 * Cylinders in the order the mechanic sees them (cylinder 1 on the left, or on the right when the
 * engine faces the other way, which also reverses the valves inside each cylinder), cut into rows
 * that fit the width: as few rows as fit, then as even as possible (6 cylinders as 3 and 3, not 4 and 2).
 */
export function diagramRows<V extends { valve: ValveName }>(views: V[], mirrored: boolean, widthPx: number): CylinderGroup<V>[][] {
  const order = mirrored ? -1 : 1;
  const byCyl = new Map<number, CylinderGroup<V>>();
  for (const v of views) {
    const g = byCyl.get(v.valve.cylinder) ?? { cylinder: v.valve.cylinder, intakes: [], exhausts: [] };
    (v.valve.kind === "intake" ? g.intakes : g.exhausts).push(v);
    byCyl.set(v.valve.cylinder, g);
  }
  const groups = [...byCyl.values()].sort((a, b) => order * (a.cylinder - b.cylinder));
  for (const g of groups) for (const side of [g.intakes, g.exhausts]) side.sort((a, b) => order * (a.valve.index - b.valve.index));
  if (groups.length === 0) return [];
  const across = Math.max(...groups.map((g) => Math.max(g.intakes.length, g.exhausts.length)));
  const perRowMax = Math.max(1, Math.floor((widthPx + GROUP_GAP_PX) / (groupWidth(across) + GROUP_GAP_PX)));
  const rows = Math.ceil(groups.length / perRowMax);
  const perRow = Math.ceil(groups.length / rows);
  const out: CylinderGroup<V>[][] = [];
  for (let i = 0; i < groups.length; i += perRow) out.push(groups.slice(i, i + perRow));
  return out;
}
