/**
 * Chooses the posterior grid for a prior, a noise model and a range of
 * measurements: warped coordinates from the noise, a panel width that resolves
 * both the likelihood (one noise sd) and the prior's narrowest feature, and a
 * range that covers every posterior those measurements can produce.
 */
import type { Distribution } from './distributions/types.js';
import type { SensoryNoise, Warp, WarpContext } from './noise/types.js';
import { GridPosterior } from './gridPosterior.js';

/** Margin, in noise sds, beyond which a likelihood is treated as zero (e^-55). */
export const LIKELIHOOD_MARGIN = 9;
/** Panel width in units of min(noise sd, prior feature). */
const PANEL_WIDTH = 1.5;

export function warpContext(prior: Distribution): WarpContext {
  // Scalar noise has no sd floor of its own; resolve down to a tenth of the
  // prior's lower tail (continuous in the prior's parameters). Computed on
  // first use: the other noise families never read it, and a quantile costs
  // as much as a few dozen posterior nodes (gamma: ≈ 5 µs).
  let floor = NaN;
  return {
    get floor() {
      if (floor !== floor) {
        const q = prior.quantile(1e-2);
        floor = q > 0 ? 0.5 * q : Math.max(1e-9, 0.01 * Math.abs(prior.mean()) || 1e-3);
      }
      return floor;
    },
  };
}

export interface MeasurementRange {
  /** In measurement space (log space for log-gaussian noise). */
  lo: number;
  hi: number;
}

/** Measurements that stimuli in [xLo, xHi] can produce, up to the likelihood margin. */
export function measurementRange(noise: SensoryNoise, xLo: number, xHi: number): MeasurementRange {
  const a = noise.center(xLo);
  const b = noise.center(xHi);
  const sa = noise.sdAt(xLo);
  const sb = noise.sdAt(xHi);
  return { lo: Math.min(a - LIKELIHOOD_MARGIN * sa, b - LIKELIHOOD_MARGIN * sb), hi: Math.max(a + LIKELIHOOD_MARGIN * sa, b + LIKELIHOOD_MARGIN * sb) };
}

/**
 * `motorReach` (in stimulus units; 0 unless the observer is motor-aware) widens
 * the grid beyond finite support ends, where the motor-convolved posterior lives too.
 */
export function buildPosteriorGrid(
  prior: Distribution,
  noise: SensoryNoise,
  range: MeasurementRange,
  motorReach = 0,
): { grid: GridPosterior; warpX: Warp; warpM: Warp; featureU: number } {
  const ctx = warpContext(prior);
  const warpX = noise.stimulusWarp(ctx);
  const warpM = noise.measurementWarp(ctx);
  const margin = noise.shiftInvariant ? LIKELIHOOD_MARGIN : LIKELIHOOD_MARGIN + 2;
  const vLo = warpM.toU(range.lo);
  const vHi = warpM.toU(range.hi);
  let uLo = vLo - margin;
  let uHi = vHi + margin;
  // Include the prior's bulk (a posterior can sit in the prior when the
  // likelihood is broad), but not further than 40 noise sds beyond the data.
  const safeU = (x: number) => {
    const u = warpX.toU(x);
    return Number.isFinite(u) ? u : NaN;
  };
  // A quantile lies inside the support, so at or past a finite lower support
  // end it cannot lower uLo: skip it there (same grid, one quantile less).
  const sLo = safeU(prior.support[0]);
  const qLo = Number.isFinite(sLo) && uLo <= sLo ? NaN : safeU(prior.quantile(1e-10));
  const qHi = safeU(prior.quantile(1 - 1e-10));
  if (Number.isFinite(qLo)) uLo = Math.min(uLo, Math.max(qLo, uLo - 40));
  if (Number.isFinite(qHi)) uHi = Math.max(uHi, Math.min(qHi, uHi + 40));
  const x0 = prior.mean();
  const u0 = warpX.toU(x0);
  const featureU = prior.featureScale() / warpX.dxdu(Number.isFinite(u0) ? u0 : 0);
  const width = PANEL_WIDTH * Math.min(1, Number.isFinite(featureU) && featureU > 0 ? featureU : 1);
  const grid = new GridPosterior({ prior, noise, warp: warpX, uLo, uHi, panelWidth: width, extendX: motorReach });
  return { grid, warpX, warpM, featureU: Number.isFinite(featureU) && featureU > 0 ? featureU : 1 };
}
