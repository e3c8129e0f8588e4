/**
 * Which (participants, trials) pairs to recommend once P(correct) is known
 * over the grid. A cell reaches the target when its estimated P(correct) is
 * at least the target. The frontier is the set of reaching cells that no
 * other reaching cell beats on both counts (Pareto-minimal: fewer or as many
 * participants and fewer or as many trials). With costs, the cheapest
 * reaching cell is chosen by total cost N·(per participant + T·per trial),
 * ties going to fewer participants (less burden on people).
 */
import type { GridCell } from './planGrid.js';

export interface Costs {
  participant: number;
  trial: number;
}

export interface DesignChoice {
  target: number;
  reached: boolean;
  /** Reaching cells not beaten on both counts, by participants ascending. */
  frontier: GridCell[];
  /** With costs: the cheapest reaching cell and its cost. */
  cheapest: { cell: GridCell; cost: number } | null;
  /** The cell with the highest estimated P(correct) (first in grid order on ties). */
  best: GridCell;
  /** Frontier cells whose interval (the pool-aware one when present) still includes values below the target. */
  borderline: GridCell[];
}

export const studyCost = (c: Pick<GridCell, 'participants' | 'trials'>, costs: Costs) => c.participants * (costs.participant + c.trials * costs.trial);

export function chooseDesign(cells: readonly GridCell[], target: number, costs?: Costs): DesignChoice {
  if (!cells.length) throw new Error('chooseDesign needs at least one grid cell');
  const reaching = cells.filter((c) => c.correct.estimate >= target);
  const frontier = reaching
    .filter((c) => !reaching.some((d) => d !== c && d.participants <= c.participants && d.trials <= c.trials && (d.participants < c.participants || d.trials < c.trials)))
    .sort((a, b) => a.participants - b.participants || a.trials - b.trials);
  let cheapest: DesignChoice['cheapest'] = null;
  if (costs)
    for (const cell of reaching) {
      const cost = studyCost(cell, costs);
      if (!cheapest || cost < cheapest.cost || (cost === cheapest.cost && cell.participants < cheapest.cell.participants)) cheapest = { cell, cost };
    }
  const best = cells.reduce((a, b) => (b.correct.estimate > a.correct.estimate ? b : a));
  return { target, reached: reaching.length > 0, frontier, cheapest, best, borderline: frontier.filter((c) => (c.withPool ?? c.correct).lower < target) };
}
