/**
 * A/B timing of two builds of lossprobe, alternating between them:
 *
 *   npx tsc -p tsconfig.bench.json
 *   node dist-bench/test/bench/compareBuilds.js OLD_DIST NEW_DIST [--rounds 5] [--fits] [--more]
 *
 * (Plain node, as lossprobe runs: under tsx the children's timings were about
 * 1.5× higher and noisier.)
 *
 * e.g. `cp -r dist /tmp/old-dist` before a change, rebuild, then compare
 * /tmp/old-dist with dist. Both builds time the same cases as `npm run bench`
 * section 1 (section 2 with --fits; with --more, other priors, noise families
 * and motor noise levels, including the traps of issue #2). Each round runs
 * one child process per build and case, in the order A, B then B, A (so that the
 * machine's slow drifts hit both alike: timings here vary 2× between runs,
 * other jobs share the cores); the printed ratio is the median over rounds of
 * the per-round ratio B/A.
 *
 * One build and one case per process: with both builds loaded in one process
 * (as this tool did before), two copies of the same build timed 2.2× apart,
 * the second one loaded being the slower, and with every case in one process
 * the first timed and the mix of losses moved the timings by ±30% (measured
 * on this machine), so the ratios said more about order than about the code.
 */
import { spawnSync } from 'node:child_process';
import { resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const args = process.argv.slice(2);
const flag = (name: string, dflt: number) => {
  const i = args.indexOf(name);
  return i >= 0 ? Number(args[i + 1]) : dflt;
};
const childDist = args.includes('--child') ? args[args.indexOf('--child') + 1] : null;
const [distA, distB] = args.filter((a, i) => !a.startsWith('--') && !(i > 0 && ['--rounds', '--child'].includes(args[i - 1])));
if (!childDist && (!distA || !distB)) throw new Error('usage: compareBuilds.ts OLD_DIST NEW_DIST [--rounds N] [--fits] [--more]');
const rounds = flag('--rounds', 5);
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

interface CaseTiming {
  name: string;
  ms: number;
  logLik: number;
}

/** The cases, by name, with how to build each on a loaded build and how long to time it. */
function caseList(): { name: string; make: (b: Build) => () => number; reps: number; batch: number }[] {
  const list = families.map((spec) => ({ name: JSON.stringify(spec), make: (b: Build) => densityCase(b, spec), reps: 15, batch: 20 }));
  if (withMore) for (const m of more) list.push({ name: m[0], make: (b: Build) => moreCase(b, m), reps: 7, batch: 3 });
  if (withFits) {
    for (const [name, loss] of [
      ['fit power', { family: 'power', exponent: 1.6 }],
      ['fit squared', { family: 'squared' }],
    ] as const) list.push({ name, make: (b: Build) => fitCase(b, name, loss), reps: 3, batch: 1 });
  }
  return list;
}

/** Child: one case on one build, warmed up, as JSON on stdout. */
async function timeOneCase(dist: string, name: string): Promise<CaseTiming> {
  const b = await load(dist);
  const c = caseList().find((k) => k.name === name);
  if (!c) throw new Error(`no case ${name}`);
  const fn = c.make(b);
  // At least 0.3 s of warm-up: V8 tiers hot code up over time, not a fixed number of calls.
  const w0 = performance.now();
  for (let n = 0; n < 2 || performance.now() - w0 < 300; n++) fn();
  return { name, ms: time(fn, c.reps, c.batch), logLik: fn() };
}

function runChild(dist: string, name: string): CaseTiming {
  const self = fileURLToPath(import.meta.url);
  const extra = [withFits ? '--fits' : '', withMore ? '--more' : ''].filter(Boolean);
  const out = spawnSync(process.execPath, [...process.execArgv, self, '--child', dist, '--case', name, ...extra], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (out.status !== 0) throw new Error(`timing ${name} on ${dist} failed:\n${out.stderr}`);
  return JSON.parse(out.stdout.trim().split('\n').pop()!);
}

if (childDist) {
  console.log(JSON.stringify(await timeOneCase(childDist, args[args.indexOf('--case') + 1])));
} else {
  console.log(`A = ${distA}\nB = ${distB}\n${rounds} rounds of one process per build and case (A, B then B, A); CPU time per call, medians over rounds\n`);
  console.log(`${'case'.padEnd(48)} ${'A'.padStart(10)} ${'B'.padStart(10)}  B/A    log-lik A − B`);
  const fmt = (ms: number) => (ms >= 10 ? `${(ms / 1000).toFixed(3)} s` : `${(ms * 1000).toFixed(0)} µs`);
  for (const { name } of caseList()) {
    const as: number[] = [];
    const bs: number[] = [];
    let la = NaN;
    let lb = NaN;
    for (let k = 0; k < rounds; k++) {
      for (const dist of k % 2 === 0 ? [distA, distB] : [distB, distA]) {
        const t = runChild(dist, name);
        if (dist === distA) (as.push(t.ms), (la = t.logLik));
        else (bs.push(t.ms), (lb = t.logLik));
      }
    }
    const ratio = as.map((a, i) => bs[i] / a);
    console.log(`${name.padEnd(48)} ${fmt(median(as)).padStart(10)} ${fmt(median(bs)).padStart(10)}  ${median(ratio).toFixed(3)}  ${(la - lb).toExponential(2)}`);
  }
}
