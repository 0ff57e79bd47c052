import type { ShimMove } from "../lash";

/**
 * The swap list the mechanic is working through, with a tick per move. It is kept whole (the moves
 * as they were when fitting began) because the plan changes as swaps are ticked: a valve with a
 * fitted shim leaves the plan, so working the list out again would renumber it under the tick marks.
 */
export interface WorkOrderState {
  moves: ShimMove[];
  done: boolean[];
}

export const workOrderKey = (checkId: string) => `fit:${checkId}`;

/** What ticking (on) or unticking (off) one move changes: the tray by size, and the fitted shim of a valve. */
export function swapEffects(m: ShimMove, on: boolean): { tray: { size: number; delta: number }[]; fit: { valveId: string; shim: number | null } | null } {
  const tray: { size: number; delta: number }[] = [];
  if (m.from.kind === "tray") tray.push({ size: m.size, delta: on ? -1 : 1 });
  if (m.to.kind === "tray") tray.push({ size: m.size, delta: on ? 1 : -1 });
  const fit = m.to.kind === "valve" ? { valveId: m.to.valveId, shim: on ? m.size : null } : null;
  return { tray, fit };
}
