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
export function swapEffects(
  m: ShimMove,
  on: boolean,
): { tray: { size: number; delta: number }[]; fit: { valveId: string; shim: number | null } | null } {
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

/**
 * The ticks of the Fit step: one per valve that gets a shim. A tick is the change made at one
 * valve, and it holds every move that change needs: a valve whose own shim goes to the tray (or is
 * set aside, to start a ring of swaps) is emptied and filled in one tick; a shim passed from one
 * valve to the next is one tick that takes it out of the one and fits it in the other (its two
 * ends), since the giving valve is then filled by the next tick. A bought, borrowed or tray shim
 * fitted to a valve already emptied is one tick too. The moves, and the tick per move kept on the
 * phone, are as before: a tick sets or clears all of its moves.
 */
export function fitTicks(moves: ShimMove[]): number[][] {
  const ticks: number[][] = [];
  for (let i = 0; i < moves.length; i++) {
    const m = moves[i]!;
    const next = moves[i + 1];
    const emptied = (m.to.kind === "tray" || m.to.kind === "aside") && m.from.kind === "valve";
    if (emptied && next && next.to.kind === "valve" && next.to.valveId === (m.from as { valveId: string }).valveId) {
      ticks.push([i, i + 1]);
      i++;
    } else ticks.push([i]);
  }
  return ticks;
}
