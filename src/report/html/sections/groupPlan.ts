/**
 * The group plan, when summary.json carries `plan` (written by `lossprobe
 * plan`): P(correct group conclusion) over participants × trials as a table
 * and a heatmap with the target contour, the recommended designs, and what
 * the numbers rest on (a resample of simulated participants, the pool's
 * size, tied evidence). The rest of the page describes the pool itself: the
 * per-participant recovery the plan resamples.
 */
import type { Section } from '../section.js';
import type { DataPath, ReportContext } from '../context.js';
import { planHeatmap } from '../../planHeatmap.js';
import { formatNumber } from '../../format.js';
import type { GridCell } from '../../../analysis/planGrid.js';

/** The parts of summary.json's `plan` object this section reads (report/planSummary.ts owns the shape). */
interface PlanJson {
  target: number;
  majorityModel: string;
  participants: number[];
  trials: number[];
  analysis: { method: 'random-effects'; evidence: string; rule: string; threshold: number } | { method: 'winner-count'; minimumShare: number };
  grid: {
    participants: number;
    trials: number;
    correct: { estimate: number; lower: number; upper: number; successes: number; n: number };
    correctWithPoolError: { lower: number; upper: number } | null;
    reachesTarget: boolean;
  }[];
  choice: { targetReached: boolean; cheapest: object | null; frontier: object[] };
  tiedEvidence: { model: string; tiedShare: number[]; equivalent: boolean }[];
  poolUse: { participants: number; warn: boolean }[];
}

const P: DataPath = ['summary', 'plan'];

function pair(ctx: ReportContext, path: DataPath): string {
  return `${ctx.num([...path, 'participants'], 'count')} participants × ${ctx.num([...path, 'trials'], 'count')} trials`;
}

function analysisWords(ctx: ReportContext, plan: PlanJson): string {
  const majority = ctx.name(plan.majorityModel);
  const a = plan.analysis;
  if (a.method === 'random-effects') {
    const evidence = a.evidence === 'cv' ? 'the cross-validated log-likelihood' : a.evidence === 'aic' ? 'minus half the AIC' : 'minus half the BIC';
    const what = a.rule === 'protected-exceedance' ? 'protected exceedance probability' : 'exceedance probability';
    return `random-effects model selection on each participant's ${evidence}; a study concludes correctly when ${majority}, the population's majority model, has ${what} above ${ctx.num([...P, 'analysis', 'threshold'], 'value')}`;
  }
  const share = a.minimumShare > 0 ? ` and more than ${ctx.num([...P, 'analysis', 'minimumShare'], 'percent')} of all participants` : '';
  return `the count of per-participant winners; a study concludes correctly when ${majority}, the population's majority model, wins more participants than any other model${share}`;
}

export const groupPlan: Section = {
  id: 'group-plan',
  title: 'Participants and trials for the group conclusion',
  applies: (d) => typeof d.summary.plan === 'object' && d.summary.plan !== null,
  async render(ctx) {
    const plan = ctx.data.summary.plan as unknown as PlanJson;
    const head = plan.trials.map((_, j) => `<th>${ctx.num([...P, 'trials', j], 'count')} trials</th>`).join('');
    const rows = plan.participants.map((n, i) => {
      const cells = plan.trials.map((t) => {
        const k = plan.grid.findIndex((c) => c.participants === n && c.trials === t);
        if (k < 0) return '<td></td>';
        const c = [...P, 'grid', k];
        const interval = plan.grid[k].correctWithPoolError ? [...c, 'correctWithPoolError'] : [...c, 'correct'];
        const reach = plan.grid[k].reachesTarget ? ' <span class="reach" title="reaches the target">✓</span>' : '';
        return `<td>${ctx.num([...c, 'correct', 'estimate'], 'percent')} <span class="ci">${ctx.num([...interval, 'lower'], 'percent')}–${ctx.num([...interval, 'upper'], 'percent')}</span>${reach}</td>`;
      });
      return `<tr><th>${ctx.num([...P, 'participants', i], 'count')}</th>${cells.join('')}</tr>`;
    });
    const cells: GridCell[] = plan.grid.map((c) => ({ participants: c.participants, trials: c.trials, studies: c.correct.n, correct: c.correct, wrong: 0, none: 0, meanScore: 0 }));
    const svg = await planHeatmap(cells, plan.target, 'P(correct group conclusion)', (p) => formatNumber(p, 'percent'));
    const figure = ctx.figure(
      'plan-heatmap.svg',
      svg,
      `P(correct group conclusion) over participants × trials; the line bounds the cells reaching the target ${ctx.num([...P, 'target'], 'percent')}.`,
      'Heatmap of the probability of the correct group conclusion over participants and trials',
    );
    const choice = plan.choice;
    const verdict = choice.cheapest
      ? `The cheapest design reaching the target of ${ctx.num([...P, 'target'], 'percent')}: ${pair(ctx, [...P, 'choice', 'cheapest'])}.`
      : choice.targetReached
        ? `The smallest designs reaching the target of ${ctx.num([...P, 'target'], 'percent')} (fewer participants need more trials): ${choice.frontier.map((_, k) => pair(ctx, [...P, 'choice', 'frontier', k])).join('; ')}.`
        : `No design in the grid reaches the target of ${ctx.num([...P, 'target'], 'percent')}; the best is ${pair(ctx, [...P, 'choice', 'best'])}, at ${ctx.num([...P, 'choice', 'best', 'probability'], 'percent')}.`;
    const ties = plan.tiedEvidence.flatMap((t, k) =>
      t.equivalent
        ? [
            `<li>${ctx.name(plan.majorityModel)} and ${ctx.name(t.model)} receive the same evidence for ${ctx.num([...P, 'tiedEvidence', k, 'tiedShare', t.tiedShare.length - 1], 'percent')} of simulated participants at the largest trial count: this design cannot tell them apart, so no number of participants or trials lets the group analysis single out ${ctx.name(plan.majorityModel)}.</li>`,
          ]
        : [],
    );
    const warned = plan.poolUse.flatMap((u, k) => (u.warn ? [k] : []));
    const seen = new Set<number>();
    const warnedN = warned.filter((k) => !seen.has(plan.poolUse[k].participants) && seen.add(plan.poolUse[k].participants));
    const poolWarning = warnedN.length
      ? `<li>With ${warnedN.map((k) => ctx.num([...P, 'poolUse', k, 'participants'], 'count')).join(', ')} participants a study draws on average at least half of some model's pool; P(correct) there is likely optimistic. Enlarge the pool.</li>`
      : '';
    return `<p class="how">The group analysis: ${analysisWords(ctx, plan)}. Each simulated study recruits its participants independently from the population and resamples each one, with replacement, from a pool of ${ctx.num(['scenario', 'scenario', 'generate', 'observers'], 'count')} simulated participants per model fitted at every trial count. The rest of this page describes that pool.</p>
<p>${verdict} In the table, ✓ marks the cells that reach it; the grey range is the 95% interval.</p>
<div class="table-wrap"><table class="data"><thead><tr><th>participants</th>${head}</tr></thead><tbody>
${rows.join('\n')}
</tbody></table></div>
<div class="figs">${figure}</div>
<ul>
  <li>A study here is a resample of simulated participants, not a fresh simulation. Studies share participants, so intervals are optimistic when the number of participants is large relative to the pool; where shown, intervals also count the pool's own sampling error, estimated from bootstrap replicates of the pool.</li>
  ${poolWarning}
  ${ties.join('\n  ')}
</ul>`;
  },
};
