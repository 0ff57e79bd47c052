import type { ShimMove } from "../lash";

/**
 * The swap list the mechanic is working through, with a tick per move. It is kept whole (the moves
 * as they were when fitting began) because the plan changes as swaps are ticked: a valve with a
 * fitted shim leaves the plan, so working the list out again would renumber it under the tick marks.
 */
export interface WorkOrderState {
  moves: ShimMove[];
  done: boolean[];
  /** under-bucket fit: the tasks ticked (lib/check/shim-position, by key), kept with this list */
  tasks?: string[];
  /** under-bucket fit: the two-turn check said done at the re-check, before its first reading */
  turned?: boolean;
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

/** The valves whose shim changes in a swap list: a valve that gives its shim away gets another. */
export function valvesOfMoves(moves: ShimMove[]): string[] {
  const out = new Set<string>();
  for (const m of moves) for (const p of [m.from, m.to]) if (p.kind === "valve") out.add(p.valveId);
  return [...out];
}
