/**
 * Interleaved A/B timing of two builds of lossprobe in one process:
 *
 *   npx tsx test/bench/compareBuilds.ts OLD_DIST NEW_DIST [--rounds 7] [--fits]
 *
 * e.g. `cp -r dist /tmp/old-dist` before a change, rebuild, then compare
 * /tmp/old-dist with dist. Both builds time the same cases as `npm run bench`
 * section 1 (and section 2 with --fits), alternating A, B, A, B ... so that the
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

async function load(dist: string) {
  const imp = (p: string) => import(pathToFileURL(resolve(dist, p)).href);
  const [gamma, constant, registry, density, sampler, rng, candidate, fit] = await Promise.all([
    imp('observer/distributions/gamma.js'),
    imp('observer/noise/constant.js'),
    imp('observer/loss/registry.js'),
    imp('observer/responseDensity.js'),
    imp('observer/sampler.js'),
    imp('numerics/rng.js'),
    imp('fit/candidate.js'),
    imp('fit/fitModel.js'),
  ]);
  return { gamma, constant, registry, density, sampler, rng, candidate, fit };
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

/** Median time of `reps` calls after a warm-up, in ms. */
function time(fn: () => number, reps: number): number {
  const ts: number[] = [];
  for (let i = 0; i < reps; i++) {
    const t0 = performance.now();
    fn();
    ts.push(performance.now() - t0);
  }
  return ts.sort((a, b) => a - b)[Math.floor(reps / 2)];
}
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

const A = await load(distA);
const B = await load(distB);
const cases: { name: string; a: () => number; b: () => number; reps: number }[] = families.map((s) => ({ name: JSON.stringify(s), a: densityCase(A, s), b: densityCase(B, s), reps: 15 }));
if (withFits) {
  for (const [name, loss] of [
    ['fit power', { family: 'power', exponent: 1.6 }],
    ['fit squared', { family: 'squared' }],
  ] as const) cases.push({ name, a: fitCase(A, name, loss), b: fitCase(B, name, loss), reps: 1 });
}
console.log(`A = ${distA}\nB = ${distB}\n${rounds} interleaved rounds; times are medians over rounds\n`);
console.log(`${'case'.padEnd(48)} ${'A'.padStart(10)} ${'B'.padStart(10)}  B/A    log-lik A − B`);
for (const c of cases) {
  for (let i = 0; i < 20 && c.reps > 1; i++) (c.a(), c.b()); // warm both past optimisation
  const ta: number[] = [];
  const tb: number[] = [];
  const ratio: number[] = [];
  for (let k = 0; k < rounds; k++) {
    const x = time(c.a, c.reps);
    const y = time(c.b, c.reps);
    ta.push(x);
    tb.push(y);
    ratio.push(y / x);
  }
  const fmt = (ms: number) => (ms >= 10 ? `${(ms / 1000).toFixed(3)} s` : `${(ms * 1000).toFixed(0)} µs`);
  console.log(`${c.name.padEnd(48)} ${fmt(median(ta)).padStart(10)} ${fmt(median(tb)).padStart(10)}  ${median(ratio).toFixed(3)}  ${(c.a() - c.b()).toExponential(2)}`);
}
