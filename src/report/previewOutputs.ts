/**
 * Files of the analytic preview: preview.json (versioned), tidy CSV files and
 * SVG figures of the predicted accuracy by trial count and of the predicted
 * response mean ± sd per stimulus.
 */
import type { AnalyticPreview } from '../design/analyticPreview.js';
import { csvTable } from './csv.js';
import { lineChart, type Series } from './charts.js';

export interface DesignPreview {
  variant: string;
  analytic: AnalyticPreview;
}

/** One row per (design, generating model, candidate). */
export function distinguishabilityCsv(designs: readonly DesignPreview[]): string {
  const rows: unknown[][] = [];
  for (const d of designs) {
    const v = d.analytic.divergence;
    v.rows.forEach((g, i) =>
      v.columns.forEach((c, j) => {
        if (g === c) return;
        const pair = d.analytic.pairs.find((p) => (p.a === g && p.b === c) || (p.a === c && p.b === g));
        rows.push([d.variant, g, c, v.kl[i][j], v.variance[i][j], pair?.label ?? '']);
      }),
    );
  }
  return csvTable(['design', 'generating', 'candidate', 'kl_per_trial', 'llr_variance_per_trial', 'pair_label'], rows);
}

/** One row per (design, trial count, generating model). */
export function predictedAccuracyCsv(designs: readonly DesignPreview[]): string {
  const rows: unknown[][] = [];
  for (const d of designs) for (const c of d.analytic.predicted.curve) for (const [g, p] of Object.entries(c.byModel)) rows.push([d.variant, c.trials, g, p]);
  return csvTable(['design', 'trials', 'generating', 'predicted_correct'], rows);
}

export function responseMomentsCsv(designs: readonly DesignPreview[]): string {
  const rows: unknown[][] = [];
  for (const d of designs) for (const m of d.analytic.responseMoments) rows.push([d.variant, m.model, m.condition, m.stimulus, m.mean, m.sd]);
  return csvTable(['design', 'generating', 'condition', 'stimulus', 'response_mean', 'response_sd'], rows);
}

export function fisherCsv(designs: readonly DesignPreview[]): string {
  const rows: unknown[][] = [];
  for (const d of designs)
    for (const f of d.analytic.fisher) f.parameters.forEach((p, i) => rows.push([d.variant, f.model, p, f.trials, f.se[i], f.freeSe[i], f.nearSingular]));
  return csvTable(['design', 'model', 'parameter', 'trials', 'predicted_se', 'predicted_se_transformed', 'near_singular'], rows);
}

export async function predictedAccuracyFigure(d: DesignPreview): Promise<string> {
  const a = d.analytic;
  const series: Series[] = a.generating.map((g) => ({ name: g, x: a.predicted.curve.map((c) => Math.log10(c.trials)), y: a.predicted.curve.map((c) => c.byModel[g]) }));
  return lineChart({
    title: `Predicted chance of choosing the generating model (${a.predicted.criterion.toUpperCase()}, normal approximation)`,
    xTitle: 'log10(trials per observer)',
    yTitle: 'P(correct model)',
    series,
    reference: { name: 'target', x: [1, Math.log10(a.predicted.curve[a.predicted.curve.length - 1].trials)], y: [a.predicted.target, a.predicted.target] },
  });
}

export async function responseMomentsFigure(d: DesignPreview, condition: string): Promise<string> {
  const series: Series[] = [];
  for (const g of d.analytic.generating) {
    const pts = d.analytic.responseMoments.filter((m) => m.model === g && m.condition === condition);
    series.push({ name: `${g} mean`, x: pts.map((p) => p.stimulus), y: pts.map((p) => p.mean) });
    series.push({ name: `${g} sd`, x: pts.map((p) => p.stimulus), y: pts.map((p) => p.sd) });
  }
  return lineChart({ title: `Predicted response mean and sd by stimulus: ${condition}`, xTitle: 'stimulus', yTitle: 'response mean / sd', series });
}
