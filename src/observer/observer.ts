/**
 * A fully specified synthetic or fitted observer: prior, sensory noise per
 * condition, loss, and the response stage (motor noise, lapses, scale ends).
 */
import type { Distribution } from './distributions/types.js';
import type { SensoryNoise } from './noise/types.js';
import type { LossFunction } from './loss/types.js';

export interface ResponseScale {
  lower: number;
  upper: number;
  /** 'censor': responses beyond an end are recorded at the end (point masses); 'open': no clipping. */
  ends: 'censor' | 'open';
}

export interface Observer {
  prior: Distribution;
  /** Sensory noise of each condition, indexed by condition number. */
  noise: SensoryNoise[];
  loss: LossFunction;
  motorSd: number;
  lapseRate: number;
  scale: ResponseScale;
  /** Choose the estimate knowing that motor noise will be added (expected loss over both). */
  motorAware: boolean;
}

/** One participant's (or synthetic observer's) trials. */
export interface Dataset {
  stimulus: Float64Array;
  condition: Int32Array;
  response: Float64Array;
}

/** Validate combinations that the individual schemas cannot see. Returns messages, empty when fine. */
export function observerProblems(obs: Observer, stimulusSupport?: readonly [number, number]): string[] {
  const problems: string[] = [];
  const [lo, hi] = obs.prior.support;
  if (!(obs.motorSd > 0)) problems.push(`motor noise sd must be > 0 (got ${obs.motorSd})`);
  if (!(obs.lapseRate >= 0 && obs.lapseRate < 1)) problems.push(`lapse rate must be in [0, 1) (got ${obs.lapseRate})`);
  if (!(obs.scale.upper > obs.scale.lower)) problems.push(`response scale upper end must exceed the lower end (got ${obs.scale.lower} to ${obs.scale.upper})`);
  obs.noise.forEach((n, c) => {
    if (n.needsPositiveStimulus && lo < 0) problems.push(`condition ${c}: ${n.family} noise needs a prior on positive values, but the ${obs.prior.family} prior reaches ${lo}`);
    if (n.needsPositiveStimulus && stimulusSupport && stimulusSupport[0] < 0)
      problems.push(`condition ${c}: ${n.family} noise needs positive stimuli, but the stimulus distribution reaches ${stimulusSupport[0]}`);
  });
  const width = hi - lo;
  const lossWidth = obs.loss.params.window ?? obs.loss.params.width;
  if (lossWidth !== undefined && Number.isFinite(width) && 2 * lossWidth >= width) {
    problems.push(`the ${obs.loss.family} loss width ${lossWidth} spans the whole prior support [${lo}, ${hi}]: every estimate would be the same`);
  }
  return problems;
}
