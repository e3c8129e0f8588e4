/**
 * A/B timing of two builds of lossprobe, alternating between them:
 *
 *   npx tsx test/bench/compareBuilds.ts OLD_DIST NEW_DIST [--rounds 5] [--fits] [--more]
 *
 * e.g. `cp -r dist /tmp/old-dist` before a change, rebuild, then compare
 * /tmp/old-dist with dist. Both builds time the same cases as `npm run bench`
 * section 1 (section 2 with --fits; with --more, other priors, noise families
 * and motor noise levels, including the traps of issue #2). Each round runs
 * one child process per build, in the order A, B then B, A (so that the
 * machine's slow drifts hit both alike: timings here vary 2× between runs,
 * other jobs share the cores); the printed ratio is the median over rounds of
 * the per-round ratio B/A.
 *
 * One build per process: with both builds loaded in one process (as this tool
 * did before), two copies of the same build timed 2.2× apart, the second one
 * loaded being the slower (measured on this machine), so the ratios said more
 * about load order than about the code.
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

/** Child: every case on one build, each warmed up, as JSON on stdout. */
async function timeOneBuild(dist: string): Promise<CaseTiming[]> {
  const b = await load(dist);
  const cases: { name: string; fn: () => number; reps: number; batch: number }[] = families.map((s) => ({ name: JSON.stringify(s), fn: densityCase(b, s), reps: 7, batch: 10 }));
  if (withMore) for (const m of more) cases.push({ name: m[0], fn: moreCase(b, m), reps: 5, batch: 3 });
  if (withFits) {
    for (const [name, loss] of [
      ['fit power', { family: 'power', exponent: 1.6 }],
      ['fit squared', { family: 'squared' }],
    ] as const) cases.push({ name, fn: fitCase(b, name, loss), reps: 1, batch: 1 });
  }
  // Every case warmed up before any is timed: the cases share most of the code, and
  // timing the first one while later ones still trigger compilation skews it.
  for (const c of cases) for (let i = 0; i < (c.reps > 1 ? 30 : 1); i++) c.fn();
  return cases.map((c) => ({ name: c.name, ms: time(c.fn, c.reps, c.batch), logLik: c.fn() }));
}

function runChild(dist: string): CaseTiming[] {
  const self = fileURLToPath(import.meta.url);
  const extra = [withFits ? '--fits' : '', withMore ? '--more' : ''].filter(Boolean);
  const out = spawnSync(process.execPath, [...process.execArgv, self, '--child', dist, ...extra], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (out.status !== 0) throw new Error(`timing ${dist} failed:\n${out.stderr}`);
  return JSON.parse(out.stdout.trim().split('\n').pop()!);
}

if (childDist) {
  console.log(JSON.stringify(await timeOneBuild(childDist)));
} else {
  console.log(`A = ${distA}\nB = ${distB}\n${rounds} rounds of one process per build (A, B then B, A); CPU time per call, medians over rounds\n`);
  const ta = new Map<string, number[]>();
  const tb = new Map<string, number[]>();
  const ll = new Map<string, [number, number]>();
  for (let k = 0; k < rounds; k++) {
    const order = k % 2 === 0 ? [distA, distB] : [distB, distA];
    const got = new Map(order.map((d) => [d, runChild(d)]));
    for (const [dist, into] of [[distA, ta], [distB, tb]] as const) {
      for (const c of got.get(dist)!) {
        into.set(c.name, [...(into.get(c.name) ?? []), c.ms]);
        const pair = ll.get(c.name) ?? [NaN, NaN];
        pair[dist === distA ? 0 : 1] = c.logLik;
        ll.set(c.name, pair);
      }
    }
  }
  console.log(`${'case'.padEnd(48)} ${'A'.padStart(10)} ${'B'.padStart(10)}  B/A    log-lik A − B`);
  const fmt = (ms: number) => (ms >= 10 ? `${(ms / 1000).toFixed(3)} s` : `${(ms * 1000).toFixed(0)} µs`);
  for (const [name, as] of ta) {
    const bs = tb.get(name)!;
    const ratio = as.map((a, i) => bs[i] / a);
    const [la, lb] = ll.get(name)!;
    console.log(`${name.padEnd(48)} ${fmt(median(as)).padStart(10)} ${fmt(median(bs)).padStart(10)}  ${median(ratio).toFixed(3)}  ${(la - lb).toExponential(2)}`);
  }
}
