/**
 * Sensory noise: the distribution of the internal measurement m given the
 * stimulus x. Every family is Gaussian in some space, so p(m | x) is
 * N(m; center(x), sdAt(x)²) with m measured in `space`.
 */
import type { RandomStream } from '../../numerics/rng.js';

/** A monotone change of coordinates in which grids are uniform. */
export interface Warp {
  toU(x: number): number;
  fromU(u: number): number;
  /** dx/du at u */
  dxdu(u: number): number;
  /** (d²x/du²)/(dx/du) at u: the log-derivative of the Jacobian. */
  curvature(u: number): number;
}

export interface WarpContext {
  /** A small positive magnitude below which scalar noise is not resolved further. */
  floor: number;
}

export interface SensoryNoise {
  readonly family: string;
  /** 'linear': m = x + ε; 'log': m = log x + ε. */
  readonly space: 'linear' | 'log';
  /** The stimulus (and the prior) must be positive. */
  readonly needsPositiveStimulus: boolean;
  /** True when the sd does not depend on x in the warped coordinates (then p(m|x) depends on v − u only). */
  readonly shiftInvariant: boolean;
  center(x: number): number;
  /** The stimulus whose noiseless measurement is m (inverse of center). */
  stimulusAt(m: number): number;
  sdAt(x: number): number;
  sample(x: number, rand: RandomStream): number;
  /** Coordinates for stimulus grids: the noise sd is about one unit everywhere. */
  stimulusWarp(ctx: WarpContext): Warp;
  /** Coordinates for measurement grids (same units as the stimulus warp). */
  measurementWarp(ctx: WarpContext): Warp;
}

export const linearWarp = (scale: number): Warp => ({
  toU: (x) => x / scale,
  fromU: (u) => u * scale,
  dxdu: () => scale,
  curvature: () => 0,
});

/** u = asinh(x/a)/b: linear near zero (spacing a/b), logarithmic far out (spacing ∝ x). */
export const asinhWarp = (a: number, b: number): Warp => ({
  toU: (x) => Math.asinh(x / a) / b,
  fromU: (u) => a * Math.sinh(b * u),
  dxdu: (u) => a * b * Math.cosh(b * u),
  curvature: (u) => b * Math.tanh(b * u),
});

export const logWarp = (scale: number): Warp => ({
  toU: (x) => Math.log(x) / scale,
  fromU: (u) => Math.exp(u * scale),
  dxdu: (u) => scale * Math.exp(u * scale),
  curvature: () => scale,
});
