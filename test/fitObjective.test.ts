/**
 * The fit's objective reuses work between nearby points (src/fit/fitModel.ts):
 * the lapse-free terms across probes along the lapse rate (exactly what a
 * fresh evaluation gives), and the estimate curves across probes along the
 * motor sd (the same wherever refinement would choose the same nodes, and
 * within the curve's interpolation error where it would not). The reference is lapseFreeTerms / the objective built anew
 * for the probe point alone.
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

const sameNodes = (a: Float64Array, b: Float64Array) => a.length === b.length && a.every((v, i) => v === b[i]);

describe('work shared between nearby points of a fit', () => {
  it('a curve built at σm serves σm·(1 ± 0.5%) as a fresh one: exactly where refinement picks the same nodes', () => {
    let sameSeen = 0;
    for (const { loss } of cases) {
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
        // The refinement tolerance moved by 0.5%. Where refinement picks the same nodes, the same
        // likelihood; where the move flips a node's test (hit-or-miss at ×1.005), the two curves
        // differ by their interpolation error, each within the tolerance: measured 1.7e-5 nats.
        const same = sameNodes(fresh.curves[0]!.v, base.curves[0]!.v);
        const diff = Math.abs(logLikelihoodFromTerms(reused, obs.lapseRate) - logLikelihoodFromTerms(fresh, obs.lapseRate));
        expect(diff).toBeLessThanOrEqual(same ? 1e-9 : 1e-4);
        if (same) sameSeen++;
      }
    }
    // The exact branch above must have run (power p = 1.6 keeps its nodes at both factors).
    expect(sameSeen).toBeGreaterThanOrEqual(2);
  });

  it('a chain of small motor-sd steps does not carry a curve beyond 1% of where it was built', () => {
    // A case whose refinement does move with the tolerance (power p = 0.5, small motor noise).
    const m = model({ loss: { family: 'power', exponent: 0.5 }, noise: { family: 'constant', sd: 2 }, motorSd: 0.3 });
    const data = simulate(m, 300, 'objective-chain');
    const i = m.free.findIndex((p) => p.name === 'motorSd');
    const shared = negLogLikObjective(m, data, []);
    let z = freeVector(m, m.base);
    // Steps of 0.8% in σm: each within 1% of the last, 8% after ten.
    for (let k = 1; k <= 10; k++) {
      shared(z);
      z = z.slice();
      z[i] = freeVector(m, { ...m.base, motorSd: 0.3 * 0.992 ** k })[i];
    }
    expect(Math.abs(shared(z) - negLogLikObjective(m, data, [])(z))).toBeLessThanOrEqual(1e-9);
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
