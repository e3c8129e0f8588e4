/**
 * Figures of `fit`: per participant, a quantile–quantile plot of the
 * posterior-predictive check (observed response-error quantiles against those
 * simulated at each model's fitted parameters); points on the diagonal mean
 * the model reproduces the observed spread and skew of errors (the KS
 * distances are in predictive-checks.csv).
 */
import type { ParticipantSummary } from '../analysis/groupFit.js';
import { lineChart, type Series } from './charts.js';

/** A file-name-safe form of a participant id (the id itself stays in the title). */
export const figureName = (participant: string) => `predictive-${participant.replace(/[^A-Za-z0-9_.-]/g, '_')}.svg`;

export async function predictiveFigure(p: ParticipantSummary): Promise<string | null> {
  const series: Series[] = p.models
    .filter((m) => m.predictiveCheck)
    .map((m) => ({ name: m.model, x: m.predictiveCheck!.observedErrorQuantiles, y: m.predictiveCheck!.simulatedErrorQuantiles }));
  if (!series.length) return null;
  const all = series.flatMap((s) => [...s.x, ...s.y]).filter(Number.isFinite);
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  return lineChart({
    title: `Participant ${p.participant}: predictive check (error quantiles 10, 25, 50, 75, 90%)`,
    xTitle: 'observed response error (response − stimulus)',
    yTitle: 'simulated at the fitted parameters',
    series,
    reference: { name: 'equal', x: [lo, hi], y: [lo, hi] },
  });
}
