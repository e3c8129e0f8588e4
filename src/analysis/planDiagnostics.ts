/**
 * Checks that explain a plan's numbers.
 *
 * Tied evidence: when the design gives the true majority model and another
 * candidate the same evidence for (nearly) every simulated participant, the
 * group analysis cannot prefer either, whatever the number of participants.
 * A difference below 0.1 in log-evidence is treated as tied; on the scale of
 * Kass & Raftery (1995, JASA 90:773–795, §3.2) anything below 1 (2·Δ < 2) is
 * "not worth more than a bare mention", so 0.1 is well inside that and above
 * the optimiser's run-to-run noise (~1e-4 in log-likelihood, src/fit/compare.ts).
 * A pair is called equivalent when at least 80% of the pool is tied at the
 * largest trial count; a few participants whose fit found a different local
 * optimum must not hide an equivalence.
 *
 * Pool size: a resampled study draws participants with replacement from a
 * finite pool. Drawing n from a pool of P gives on average
 * P·(1 − (1 − 1/P)^n) distinct participants (occupancy; Feller 1968, An
 * Introduction to Probability Theory, vol. 1, §II.11), and studies overlap
 * more as n grows, so their spread, and hence the spread of P(correct), is
 * understated. A warning is raised once a study's expected draws from one
 * model reach half of that model's pool.
 */
import type { PlanPool } from './planPool.js';
import { populationOrder } from './planGrid.js';

export const TIED_EVIDENCE = 0.1;
export const EQUIVALENT_SHARE = 0.8;
export const POOL_WARNING_RATIO = 0.5;

export interface TiedPair {
  /** The other candidate compared with the majority model. */
  model: string;
  /** Per trial count (pool order): share of pool participants with |Δ log-evidence| < TIED_EVIDENCE. */
  tiedShare: number[];
  /** Per trial count: median |Δ log-evidence| over the pool. */
  medianDifference: number[];
  /** Tied for at least EQUIVALENT_SHARE of the pool at the largest trial count. */
  equivalent: boolean;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
}

export function evidenceTies(pool: PlanPool, majority: string): TiedPair[] {
  const m = pool.candidates.indexOf(majority);
  const everyone = Object.values(pool.byModel).flat();
  return pool.candidates
    .map((model, k) => ({ model, k }))
    .filter(({ k }) => k !== m)
    .map(({ model, k }) => {
      const diffs = pool.trials.map((_, t) => everyone.map((p) => Math.abs(p.evidence[t][m] - p.evidence[t][k])));
      const tiedShare = diffs.map((d) => (d.length ? d.filter((x) => x < TIED_EVIDENCE).length / d.length : NaN));
      return { model, tiedShare, medianDifference: diffs.map((d) => (d.length ? median(d) : NaN)), equivalent: tiedShare[tiedShare.length - 1] >= EQUIVALENT_SHARE };
    });
}

export interface PoolUse {
  participants: number;
  model: string;
  pool: number;
  /** Expected draws from this model's pool in one study (N × share). */
  expectedDraws: number;
  /** Expected share of those draws that are distinct participants. */
  distinctShare: number;
  warn: boolean;
}

export function poolUse(pool: PlanPool, population: Readonly<Record<string, number>>, participants: readonly number[]): PoolUse[] {
  const { models, shares } = populationOrder(pool, population);
  return [...participants]
    .sort((a, b) => a - b)
    .flatMap((n) =>
      models.map((model, i) => {
        const size = pool.byModel[model].length;
        const draws = n * shares[i];
        const distinct = size * (1 - Math.pow(1 - 1 / size, draws));
        return { participants: n, model, pool: size, expectedDraws: draws, distinctShare: draws > 0 ? distinct / draws : 1, warn: draws >= POOL_WARNING_RATIO * size };
      }),
    );
}
