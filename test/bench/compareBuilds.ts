/**
 * Interleaved A/B timing of two builds of lossprobe in one process:
 *
 *   npx tsx test/bench/compareBuilds.ts OLD_DIST NEW_DIST [--rounds 7] [--fits] [--more]
 *
 * e.g. `cp -r dist /tmp/old-dist` before a change, rebuild, then compare
 * /tmp/old-dist with dist. Both builds time the same cases as `npm run bench`
 * section 1 (section 2 with --fits; with --more, other priors, noise families
 * and motor noise levels, including the traps of issue #2), alternating A, B, A, B ... so that the
 * machine's slow drifts (timings here vary 2× between runs, other jobs share
 * the cores) hit both alike; the printed ratio is the median over rounds of
 * the per-round ratio B/A. Each build constructs its own observers and data
 * (from the same seeds), so no object crosses from one build's code to the
 * other's (which could de-optimise either).
 */
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const args = process.argv.slice(2);
const flag = (name: string, dflt: number) => {
  const i = args.indexOf(name);
  return i >= 0 ? Number(args[i + 1]) : dflt;
};
const [distA, distB] = args.filter((a, i) => !a.startsWith('--') && !(i > 0 && args[i - 1] === '--rounds'));
if (!distA || !distB) throw new Error('usage: compareBuilds.ts OLD_DIST NEW_DIST [--rounds N] [--fits]');
const rounds = flag('--rounds', 7);
const withFits = args.includes('--fits');
const withMore = args.includes('--more');

async function load(dist: string) {
  const imp = (p: string) => import(pathToFileURL(resolve(dist, p)).href);
  const [gamma, constant, registry, density, sampler, rng, candidate, fit, distributions, noises] = await Promise.all([
    imp('observer/distributions/gamma.js'),
    imp('observer/noise/constant.js'),
    imp('observer/loss/registry.js'),
    imp('observer/responseDensity.js'),
    imp('observer/sampler.js'),
    imp('numerics/rng.js'),
    imp('fit/candidate.js'),
    imp('fit/fitModel.js'),
    imp('observer/distributions/registry.js'),
    imp('observer/noise/registry.js'),
  ]);
  return { gamma, constant, registry, density, sampler, rng, candidate, fit, distributions, noises };
}
type Build = Awaited<ReturnType<typeof load>>;

const families = [
  { family: 'squared' },
  { family: 'absolute' },
  { family: 'hit-or-miss', window: 2 },
  { family: 'asymmetric-linear', level: 0.7 },
  { family: 'power', exponent: 1.5 },
  { family: 'inverted-gaussian', width: 4 },
  { family: 'power', exponent: 0.7 },
];

/** The bench's section-1 case for one loss: a closure evaluating the log-likelihood. */
function densityCase(b: Build, spec: object): () => number {
  const obs = {
    prior: new b.gamma.Gamma(2, 9),
    noise: [new b.constant.ConstantNoise(6)],
    loss: b.registry.createLoss(spec),
    motorSd: 2,
    lapseRate: 0.02,
    scale: { lower: 0, upper: 120, ends: 'censor' },
    motorAware: false,
  };
  const rand = b.rng.streamFromKey(`bench/${JSON.stringify(spec)}`);
  const stim = Float64Array.from({ length: 300 }, () => obs.prior.sample(rand));
  const data = b.sampler.simulateResponses(obs, stim, new Int32Array(300), rand);
  return () => b.density.logLikelihood(obs, data);
}

const mixture = { family: 'gaussian-mixture', components: [{ weight: 1, mean: -2, sd: 1 }, { weight: 2, mean: 3, sd: 1.5 }] };
/** [name, prior, noise, loss, motor sd] for --more. */
const more: [string, object, object, object, number][] = [
  ['log-normal/log-gaussian/absolute σm 1', { family: 'log-normal', mu: Math.log(10), sigma: 0.5 }, { family: 'log-gaussian', sd: 0.15 }, { family: 'absolute' }, 1],
  ['log-normal/log-gaussian/absolute σm 0.2', { family: 'log-normal', mu: Math.log(10), sigma: 0.5 }, { family: 'log-gaussian', sd: 0.15 }, { family: 'absolute' }, 0.2],
  ['gamma/scalar/squared σm 1', { family: 'gamma', shape: 3, scale: 5 }, { family: 'scalar', weber: 0.2 }, { family: 'squared' }, 1],
  ['gamma/scalar/squared σm 0.05', { family: 'gamma', shape: 3, scale: 5 }, { family: 'scalar', weber: 0.2 }, { family: 'squared' }, 0.05],
  ['mixture/constant/hit-or-miss σm 0.5 (jumps)', mixture, { family: 'constant', sd: 1.3 }, { family: 'hit-or-miss', window: 0.3 }, 0.5],
  ['mixture/constant/hit-or-miss σm 0.05', mixture, { family: 'constant', sd: 1.3 }, { family: 'hit-or-miss', window: 0.3 }, 0.05],
  ['log-normal/constant/absolute σm 0.05 (trap 1)', { family: 'log-normal', mu: Math.log(8), sigma: 0.6 }, { family: 'constant', sd: 1 }, { family: 'absolute' }, 0.05],
];

function moreCase(b: Build, [name, prior, noise, loss, motorSd]: (typeof more)[number]): () => number {
  const obs = {
    prior: b.distributions.createDistribution(prior),
    noise: [b.noises.createNoise(noise)],
    loss: b.registry.createLoss(loss),
    motorSd,
    lapseRate: 0.02,
    scale: { lower: -50, upper: 200, ends: 'open' },
    motorAware: false,
  };
  const rand = b.rng.streamFromKey(`compare/${name}`);
  const stim = Float64Array.from({ length: 300 }, () => obs.prior.sample(rand));
  const data = b.sampler.simulateResponses(obs, stim, new Int32Array(300), rand);
  return () => b.density.logLikelihood(obs, data);
}

function fitCase(b: Build, name: string, loss: object): () => number {
  const model = b.candidate.defineCandidate({
    name,
    loss,
    prior: { family: 'gamma', shape: 2, scale: 9 },
    conditions: [{ name: 'c', noise: { family: 'constant', sd: 6 } }],
    scale: { lower: 0, upper: 120, ends: 'censor' },
    motorSd: 2,
    lapseRate: 0.02,
  });
  const rand = b.rng.streamFromKey(`bench-fit/${name}`);
  const obs = b.candidate.observerFromValues(model, model.base);
  const stim = Float64Array.from({ length: 300 }, () => obs.prior.sample(rand));
  const data = b.sampler.simulateResponses(obs, stim, new Int32Array(300), rand);
  return () => b.fit.fitModel(model, data, { starts: 4 }).logLikelihood;
}

/**
 * Median over `reps` batches of the CPU time (user + system, process.cpuUsage)
 * per call, in ms. CPU time rather than wall time: with other jobs on the
 * cores, wall time also counts the time this process waits to be scheduled.
 */
function time(fn: () => number, reps: number, batch: number): number {
  const ts: number[] = [];
  for (let i = 0; i < reps; i++) {
    const t0 = process.cpuUsage();
    for (let b = 0; b < batch; b++) fn();
    const d = process.cpuUsage(t0);
    ts.push((d.user + d.system) / 1000 / batch);
  }
  return ts.sort((a, b) => a - b)[Math.floor(reps / 2)];
}
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

const A = await load(distA);
const B = await load(distB);
const cases: { name: string; a: () => number; b: () => number; reps: number; batch: number }[] = families.map((s) => ({ name: JSON.stringify(s), a: densityCase(A, s), b: densityCase(B, s), reps: 7, batch: 10 }));
if (withMore) for (const m of more) cases.push({ name: m[0], a: moreCase(A, m), b: moreCase(B, m), reps: 5, batch: 3 });
if (withFits) {
  for (const [name, loss] of [
    ['fit power', { family: 'power', exponent: 1.6 }],
    ['fit squared', { family: 'squared' }],
  ] as const) cases.push({ name, a: fitCase(A, name, loss), b: fitCase(B, name, loss), reps: 1, batch: 1 });
}
console.log(`A = ${distA}\nB = ${distB}\n${rounds} interleaved rounds; CPU time per call, medians over rounds\n`);
console.log(`${'case'.padEnd(48)} ${'A'.padStart(10)} ${'B'.padStart(10)}  B/A    log-lik A − B`);
for (const c of cases) {
  for (let i = 0; i < 20 && c.reps > 1; i++) (c.a(), c.b()); // warm both past optimisation
  const ta: number[] = [];
  const tb: number[] = [];
  const ratio: number[] = [];
  for (let k = 0; k < rounds; k++) {
    const x = time(c.a, c.reps, c.batch);
    const y = time(c.b, c.reps, c.batch);
    ta.push(x);
    tb.push(y);
    ratio.push(y / x);
  }
  const fmt = (ms: number) => (ms >= 10 ? `${(ms / 1000).toFixed(3)} s` : `${(ms * 1000).toFixed(0)} µs`);
  console.log(`${c.name.padEnd(48)} ${fmt(median(ta)).padStart(10)} ${fmt(median(tb)).padStart(10)}  ${median(ratio).toFixed(3)}  ${(c.a() - c.b()).toExponential(2)}`);
}
