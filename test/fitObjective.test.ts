/**
 * The fit's objective reuses work between nearby points (src/fit/fitModel.ts):
 * the lapse-free terms across probes along the lapse rate, and the estimate
 * curves across probes along the motor sd. Both must give what a fresh
 * evaluation gives: the reference here is lapseFreeTerms / the objective
 * built anew for the probe point alone.
 */
import { describe, it, expect } from 'vitest';
import { negLogLikObjective, freeVector } from '../src/fit/fitModel.js';
import { observerFromValues } from '../src/fit/candidate.js';
import { lapseFreeTerms, logLikelihoodFromTerms } from '../src/observer/responseDensity.js';
import { model, simulate } from './helpers/fitFixtures.js';

const cases = [
  { name: 'power p = 1.6', loss: { family: 'power' as const, exponent: 1.6 } },
  { name: 'hit-or-miss', loss: { family: 'hit-or-miss' as const, window: 3 } },
];

describe('work shared between nearby points of a fit', () => {
  it.each(cases)('$name: a curve built at σm serves σm·(1 ± 0.5%) exactly as a fresh one', ({ loss }) => {
    const m = model({ loss, noise: { family: 'constant', sd: 5 } });
    const data = simulate(m, 300, `objective/${loss.family}`);
    const obs = observerFromValues(m, m.base);
    const base = lapseFreeTerms(obs, data);
    expect(base.curves[0]).not.toBeNull();
    for (const factor of [0.995, 1.005]) {
      const probe = { ...obs, motorSd: obs.motorSd * factor };
      const reused = lapseFreeTerms(probe, data, base.curves);
      const fresh = lapseFreeTerms(probe, data);
      expect(reused.curves[0]).toBe(base.curves[0]);
      expect(fresh.curves[0]).not.toBe(base.curves[0]);
      // The refinement tolerance moved by 0.5%: the same nodes, so the same likelihood.
      expect(Math.abs(logLikelihoodFromTerms(reused, obs.lapseRate) - logLikelihoodFromTerms(fresh, obs.lapseRate))).toBeLessThanOrEqual(1e-9);
    }
  });

  it.each(cases)('$name: the objective after its own probes equals a fresh objective at each probe', ({ loss }) => {
    const m = model({ loss, noise: { family: 'constant', sd: 5 } });
    const data = simulate(m, 300, `objective-probes/${loss.family}`);
    const z = freeVector(m, { ...m.base, motorSd: 2.1, lapseRate: 0.03 });
    const shared = negLogLikObjective(m, data, []);
    shared(z);
    for (const name of ['motorSd', 'lapseRate', 'noise.c.sd']) {
      const i = m.free.findIndex((p) => p.name === name);
      expect(i).toBeGreaterThanOrEqual(0);
      for (const h of [1e-3, -1e-3, 1e-2]) {
        const zp = z.slice();
        zp[i] += h;
        expect(Math.abs(shared(zp) - negLogLikObjective(m, data, [])(zp))).toBeLessThanOrEqual(1e-9);
      }
    }
  });
});
