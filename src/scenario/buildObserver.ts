/** From validated scenario pieces to an Observer, with the cross-field checks. */
import { createDistribution } from '../observer/distributions/registry.js';
import { createNoise } from '../observer/noise/registry.js';
import { createLoss, type LossSpec } from '../observer/loss/registry.js';
import { observerProblems, type Observer } from '../observer/observer.js';
import { UserError } from '../cli/userError.js';
import type { PreviewScenario } from './previewSchema.js';

export function observerFor(s: Pick<PreviewScenario, 'prior' | 'conditions' | 'response'>, loss: LossSpec, source: string): Observer {
  const obs: Observer = {
    prior: createDistribution(s.prior),
    noise: s.conditions.map((c) => createNoise(c.noise)),
    loss: createLoss(loss),
    motorSd: s.response.motorSd,
    lapseRate: s.response.lapseRate,
    scale: { lower: s.response.lower, upper: s.response.upper, ends: s.response.ends },
    motorAware: s.response.motorAware,
  };
  const problems = observerProblems(obs);
  if (problems.length) throw new UserError(`${source}: ${problems.join('; ')}`);
  return obs;
}
