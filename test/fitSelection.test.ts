/**
 * Model selection on simulated data.
 *
 * (a) Gamma prior + Weber (scalar) noise: the posterior is skewed at every
 *     magnitude, so mean (squared loss), median (absolute) and window centre
 *     (hit-or-miss, → mode) differ, and the generating loss must win by BIC
 *     (Schwarz 1978) among {squared, absolute, hit-or-miss}. Model recovery as
 *     the standard check of a selection pipeline: Wilson & Collins (2019), eLife.
 * (b) Gaussian prior + constant Gaussian noise: the posterior is Gaussian
 *     (Gelman et al., Bayesian Data Analysis, ch. 2), so every symmetric loss
 *     gives the same estimate, the posterior mean (Berger 1985, §4.4.2). Models
 *     with equal parameter counts then have the same maximised likelihood, and
 *     compareFits must say 'tied'. Positive control: an asymmetric-linear
 *     observer (τ = 0.8, estimate = posterior 0.8-quantile; Berger 1985, §4.4.2)
 *     is still told apart.
 * (c) The maximum log-likelihood found is never below the value at the
 *     generating parameters by more than 0.01 (the MLE maximises the likelihood
 *     by definition, so a shortfall means the search failed), over many seeds.
 */
import { describe, it, expect } from 'vitest';
import { fitModel, type FitResult } from '../src/fit/fitModel.js';
import { compareFits } from '../src/fit/compare.js';
import type { CandidateModel } from '../src/fit/candidate.js';
import type { LossSpec } from '../src/observer/loss/registry.js';
import type { DistributionSpec } from '../src/observer/distributions/registry.js';
import type { NoiseSpec } from '../src/observer/noise/registry.js';
import { model, simulate, logLikAt, impossibleTrials, seconds, type ModelSpec } from './helpers/fitFixtures.js';

function fitAll(candidates: CandidateModel[], data: Parameters<typeof fitModel>[1], label: string): FitResult[] {
  return candidates.map((m) => {
    const t0 = performance.now();
    const f = fitModel(m, data, { starts: 2 });
    console.log(
      `[selection] ${label} / ${m.name}: ${seconds(t0)} s, ${f.evaluations} evaluations, ${f.status} (${f.reason}), log L ${f.logLikelihood.toFixed(4)}, BIC ${f.bic.toFixed(3)}; ` +
        f.parameters.map((p) => `${p.name} ${p.value.toPrecision(4)} ± ${p.se.toPrecision(2)}`).join(', '),
    );
    return f;
  });
}

describe('(a) gamma prior + Weber noise: the generating loss wins by BIC', () => {
  const prior: DistributionSpec = { family: 'gamma', shape: 2.5, scale: 8 };
  const noise: NoiseSpec = { family: 'scalar', weber: 0.2 };
  // 2000 trials, as the issue asks. This ran at 1000 trials while a hit-or-miss
  // fit under Weber noise took minutes; after the speed work the three datasets
  // take ~80 s together at 2000 trials (measured on a loaded 2-core machine;
  // ~36 s at 1000), and every ΔBIC to the runner-up is > 45 ("very strong"
  // evidence is > 10 on the scale of Kass & Raftery 1995, JASA 90:773; from memory).
  const TRIALS = 2000;
  // Stimuli are draws from the prior above 4 and the Weber fraction is bounded
  // below by 0.08: at smaller magnitudes/fractions the posterior is narrower than
  // the hit-or-miss window next to the support end at 0, where the hit-or-miss
  // estimate curve refines to 1e4–2e5 nodes (measured: 1.5–25 s per evaluation).
  const MIN_STIMULUS = 4;
  const bounds = { 'noise.c.weber': { lower: 0.08, upper: 1 }, 'loss.window': { lower: 0.3, upper: 8 } };
  const spec = (loss: LossSpec): ModelSpec => ({ loss, prior, noise, bounds });
  const candidates = [model(spec({ family: 'squared' })), model(spec({ family: 'absolute' })), model(spec({ family: 'hit-or-miss', window: 3 }))];
  const generators: LossSpec[] = [{ family: 'squared' }, { family: 'absolute' }, { family: 'hit-or-miss', window: 3 }];

  it('precondition: simulated Weber-noise datasets contain no response the generator gives probability 0 (20 seeds)', () => {
    // Selection is only meaningful on data the generating model can produce: one
    // impossible trial is scored at the floor (−690.8) under the true model, and a
    // wrong model with inflated noise then "wins" (measured: squared beat the true
    // hit-or-miss generator by 116 log-likelihood units on such a dataset). Keys
    // 1–20, 200 trials each, not chosen by outcome.
    const generator = model(spec({ family: 'squared' }));
    const found: string[] = [];
    for (let i = 1; i <= 20; i++) {
      const data = simulate(generator, 200, `sampler-check/${i}`, MIN_STIMULUS);
      for (const t of impossibleTrials(generator, data)) found.push(`key ${i}, trial ${t}: stimulus ${data.stimulus[t].toFixed(3)}, response ${data.response[t]}`);
    }
    expect(found).toEqual([]);
  }, 120_000);

  for (const genLoss of generators) {
    const generator = model(spec(genLoss));
    const key = `selection-a/${genLoss.family}/1`;
    it(
      `${genLoss.family} generator, ${TRIALS} trials`,
      () => {
        const data = simulate(generator, TRIALS, key, MIN_STIMULUS);
        // Precondition: the data are ones the generator can produce. A trial the
        // generator's own response density gives probability 0 (scored at the
        // floor, −690.8) means the sampler and the density disagree, and no
        // selection result on such data is meaningful.
        const impossible = impossibleTrials(generator, data);
        expect(
          impossible.map((t) => `trial ${t}: stimulus ${data.stimulus[t].toFixed(3)}, response ${data.response[t]}`),
          'simulated responses with zero probability under the generating model',
        ).toEqual([]);
        const fits = fitAll(candidates, data, key);
        for (const f of fits) expect(f.status, `${f.model}: ${f.reason}`).toBe('ok');
        const cmp = compareFits(fits, 'bic');
        console.log(`[selection] ${key}: ${cmp.status}, winner ${cmp.winner}, ΔBIC ${JSON.stringify(cmp.delta)}`);
        expect(cmp.status).toBe('won');
        expect(cmp.winner).toBe(genLoss.family);
      },
      600_000,
    );
  }
});

describe('(b) gaussian prior + constant noise: symmetric losses tie; asymmetric-linear is still recovered', () => {
  const prior: DistributionSpec = { family: 'gaussian', mean: 30, sd: 10 };
  const noise: NoiseSpec = { family: 'constant', sd: 5 };
  const TRIALS = 2000;
  const spec = (loss: LossSpec, extra: Partial<ModelSpec> = {}): ModelSpec => ({ loss, prior, noise, ...extra });

  it(
    'squared, absolute and fixed-window hit-or-miss reach log-likelihoods within 1e-4; compareFits says tied',
    () => {
      const data = simulate(model(spec({ family: 'squared' })), TRIALS, 'selection-b/tie/1');
      const candidates = [
        model(spec({ family: 'squared' })),
        model(spec({ family: 'absolute' })),
        // window fixed at 2: the same three free parameters as the others
        model(spec({ family: 'hit-or-miss', window: 2 }, { free: ['noise.c.sd', 'motorSd', 'lapseRate'] })),
      ];
      expect(candidates.map((m) => m.free.length)).toEqual([3, 3, 3]);
      const fits = fitAll(candidates, data, 'selection-b/tie');
      for (const f of fits) expect(f.status, `${f.model}: ${f.reason}`).toBe('ok');
      const ll = fits.map((f) => f.logLikelihood);
      // Same estimate x̂(m) for every symmetric loss (Gelman et al. ch. 2; Berger §4.4.2) ⇒ same likelihood surface.
      expect(Math.max(...ll) - Math.min(...ll)).toBeLessThan(1e-4);
      for (const crit of ['aic', 'bic'] as const) {
        const cmp = compareFits(fits, crit);
        expect(cmp.status).toBe('tied');
        expect(cmp.winner).toBeNull();
        expect([...cmp.contenders].sort()).toEqual(['absolute', 'hit-or-miss', 'squared']);
      }
    },
    600_000,
  );

  it(
    'an asymmetric-linear observer (level 0.8) wins against squared and absolute',
    () => {
      const generator = model(spec({ family: 'asymmetric-linear', level: 0.8 }));
      const data = simulate(generator, TRIALS, 'selection-b/asymmetric/1');
      expect(impossibleTrials(generator, data)).toEqual([]);
      const candidates = [model(spec({ family: 'squared' })), model(spec({ family: 'absolute' })), model(spec({ family: 'asymmetric-linear', level: 0.8 }))];
      const fits = fitAll(candidates, data, 'selection-b/asymmetric');
      for (const f of fits) expect(f.status, `${f.model}: ${f.reason}`).toBe('ok');
      const cmp = compareFits(fits, 'bic');
      expect(cmp.status).toBe('won');
      expect(cmp.winner).toBe('asymmetric-linear');
      // squared and absolute are exactly tied with each other here (both give the posterior mean)
      expect(Math.abs(cmp.delta.squared - cmp.delta.absolute)).toBeLessThan(2e-4);
    },
    600_000,
  );
});

describe('(c) the maximum found is never below the likelihood at the generating parameters', () => {
  const noise: NoiseSpec = { family: 'constant', sd: 6 };
  const TRIALS = 300;
  const SEEDS = [1, 2, 3, 4];
  const losses: LossSpec[] = [{ family: 'squared' }, { family: 'asymmetric-linear', level: 0.7 }, { family: 'inverted-gaussian', width: 4 }];
  const TOLERANCE = 0.01;
  const cases = losses.flatMap((loss) => SEEDS.map((seed) => [loss, seed] as const));

  it.each(cases)('%o, seed %d (300 trials)', (loss, seed) => {
    const m = model({ loss, noise });
    const data = simulate(m, TRIALS, `selection-c/${loss.family}/${seed}`);
    const truth = logLikAt(m, data, m.base);
    const t0 = performance.now();
    const fit = fitModel(m, data, { starts: 2 });
    console.log(
      `[search] ${loss.family} seed ${seed}: ${seconds(t0)} s, fit ${fit.logLikelihood.toFixed(4)} vs truth ${truth.toFixed(4)} (Δ ${(fit.logLikelihood - truth).toFixed(4)}), ${fit.reason}`,
    );
    expect(Number.isFinite(truth)).toBe(true);
    expect(fit.status).toBe('ok');
    // ML estimate maximises the likelihood (definition): L(θ̂) ≥ L(θ_true) − tolerance.
    expect(fit.logLikelihood).toBeGreaterThanOrEqual(truth - TOLERANCE);
  }, 120_000);
});
