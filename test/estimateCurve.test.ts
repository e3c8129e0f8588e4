/**
 * The estimate curve meets its interpolation tolerance between its nodes, not
 * only at the midpoints its refinement tested.
 *
 * Refinement checks each segment's midpoint against the cubic interpolant.
 * With node slopes taken from neighbouring nodes (not exact), equal slope
 * errors at both ends of a segment move the cubic by h·δ·t(1 − t)(1 − 2t),
 * which is zero at the midpoint: such a segment passed while missing x̂ by
 * 16 tolerances near its quarter points, and whether a neighbouring test
 * happened to fail decided whether it was refined, so the log-likelihood
 * stepped by 1e−3 as the exponent moved (a BFGS fit then wandered for
 * hundreds of evaluations). The reference here is the pointwise Bayes
 * estimate at the same measurement, computed by the same estimator
 * (estimateAt): what is under test is the interpolation, not the estimator.
 */
import { describe, it, expect } from 'vitest';
import { Gamma } from '../src/observer/distributions/gamma.js';
import { ConstantNoise } from '../src/observer/noise/constant.js';
import { powerLoss } from '../src/observer/loss/power.js';
import { absoluteLoss } from '../src/observer/loss/absolute.js';
import { EstimateCurve, estimateAt } from '../src/observer/estimateCurve.js';
import type { Observer } from '../src/observer/observer.js';
import type { LossFunction } from '../src/observer/loss/types.js';

/** The refinement tolerance of estimateCurve.ts, in motor sds. */
const TOL = 1e-4;

function worstMiss(loss: LossFunction, sd: number, motorSd: number): number {
  const noise = new ConstantNoise(sd);
  const obs: Observer = { prior: new Gamma(2, 9), noise: [noise], loss, motorSd, lapseRate: 0.03, scale: { lower: 0, upper: 120, ends: 'censor' }, motorAware: false };
  const curve = new EstimateCurve(obs, noise, 0.5, 60);
  let worst = 0;
  // Measurements a stimulus in [0.5, 60] produces within 3 sds (the refinement covers 5).
  for (let m = 0.5 - 3 * sd; m <= 60 + 3 * sd; m += 0.01 * sd) {
    const v = curve.warpM.toU(m);
    const i = curve.segmentOf(v);
    const pred = curve.interpolate(i, v);
    worst = Math.max(worst, Math.abs(pred - estimateAt(obs, curve.post, m, pred)));
  }
  return worst / (TOL * motorSd);
}

describe('the estimate curve between its nodes', () => {
  // At the parent commit the worst of these missed by 16 tolerances (power 1.432, sd 9.2).
  it.each([1.25, 1.35, 1.432, 1.5, 1.65])('power loss p = %s, noise sd 9.2, motor sd 1.38: within 1.5 tolerances everywhere', (p) => {
    expect(worstMiss(powerLoss(p), 9.2045, 1.37886)).toBeLessThanOrEqual(1.5);
  });
  it('a sweep of power losses (p 1.1 to 1.9, noise sd 3, 6 and 9.2, motor sd 0.5 and 1.38): within 1.5 tolerances everywhere', () => {
    // Coverage of the check's wider behaviour, not a regression test: a miss needs a coincidence
    // of node layout, and this sweep passed at the parent commit too (an independent scan of about
    // 370 curves found one miss there, p = 1.438; the p = 1.432 case above is the regression test).
    // With the check the scan's worst case was 0.46 tolerances.
    let worst = 0;
    for (let p = 1.1; p <= 1.9 + 1e-9; p += 0.05) {
      for (const sd of [3, 6, 9.2]) for (const motorSd of [0.5, 1.38]) worst = Math.max(worst, worstMiss(powerLoss(p), sd, motorSd));
    }
    expect(worst).toBeLessThanOrEqual(1.5);
  });
  it.each([3, 6, 9])('absolute loss, noise sd %s, motor sd 1: within 1.5 tolerances everywhere', (sd) => {
    expect(worstMiss(absoluteLoss, sd, 1)).toBeLessThanOrEqual(1.5);
  });
});
