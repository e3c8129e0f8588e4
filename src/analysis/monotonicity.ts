/**
 * Does accuracy fall as trials grow? For successive trial counts, observers
 * present at both are paired (their datasets are nested prefixes) and a
 * one-sided exact McNemar test (McNemar 1947, Psychometrika 12) asks whether
 * more of them turned wrong than right; p-values are compared with α divided
 * by the number of comparisons (Bonferroni).
 */
import jStat from 'jstat';
import type { JobLine } from './types.js';
import { modelSuccess } from './sizingSuccess.js';
import type { SizingOptions } from './sizing.js';

export interface MonotonicityCheck {
  test: string;
  comparisons: number;
  alpha: number;
  /** Successive-count comparisons whose one-sided p-value falls below alpha / comparisons. */
  falls: { generating: string; from: number; to: number; worse: number; better: number; p: number }[];
  smallestP: number | null;
}

export function monotonicityCheck(lines: readonly JobLine[], o: SizingOptions, alpha: number): MonotonicityCheck {
  const counts = [...o.trialCounts].sort((a, b) => a - b);
  const ok = modelSuccess(o.candidates, o);
  const byKey = new Map<string, boolean>();
  for (const l of lines) byKey.set(`${l.generating}|${l.observer}|${l.trials}`, ok(l) === true);
  const comparisons = Math.max(1, (counts.length - 1) * o.generating.length);
  const falls: MonotonicityCheck['falls'] = [];
  let smallestP: number | null = null;
  for (const g of o.generating)
    for (let i = 0; i + 1 < counts.length; i++) {
      let worse = 0;
      let better = 0;
      for (const l of lines) {
        if (l.generating !== g || l.trials !== counts[i]) continue;
        const next = byKey.get(`${g}|${l.observer}|${counts[i + 1]}`);
        if (next === undefined) continue;
        const now = byKey.get(`${g}|${l.observer}|${counts[i]}`)!;
        if (now && !next) worse++;
        if (!now && next) better++;
      }
      // One-sided exact McNemar: P(Binomial(worse + better, ½) ≥ worse).
      const m = worse + better;
      const p = m === 0 ? 1 : 1 - (worse > 0 ? jStat.binomial.cdf(worse - 1, m, 0.5) : 0);
      smallestP = smallestP === null ? p : Math.min(smallestP, p);
      if (p < alpha / comparisons) falls.push({ generating: g, from: counts[i], to: counts[i + 1], worse, better, p });
    }
  return { test: 'one-sided exact McNemar test on observers paired across successive trial counts, Bonferroni-corrected', comparisons, alpha, falls, smallestP };
}
