/**
 * One synthetic observer: its true parameters and its one trial sequence,
 * drawn from a stream that depends only on the master seed, the generating
 * model and the observer index. The sequence is drawn for the study's largest
 * trial count (which the scenario hash fixes), so within a study every
 * smaller count is a prefix of it. Datasets at different trial counts are
 * nested prefixes of that sequence, balanced across conditions in every
 * block, so a sweep compares like with like.
 */
import { streamFromKey, type RandomStream } from '../numerics/rng.js';
import { createDistribution } from '../observer/distributions/registry.js';
import { simulateResponses } from '../observer/sampler.js';
import type { Dataset } from '../observer/observer.js';
import { observerFromValues, type CandidateModel } from '../fit/candidate.js';
import type { DrawSpec } from '../scenario/schema.js';
import type { ResolvedStudy } from './resolve.js';

function draw(spec: DrawSpec, rand: RandomStream): number {
  const u = rand();
  if ('fixed' in spec) return spec.fixed;
  if ('uniform' in spec) return spec.uniform[0] + u * (spec.uniform[1] - spec.uniform[0]);
  const [a, b] = spec.logUniform;
  return Math.exp(Math.log(a) + u * (Math.log(b) - Math.log(a)));
}

export function observerStream(study: ResolvedStudy, generating: string, observer: number): RandomStream {
  return streamFromKey(`lossprobe/${study.scenario.seed}/gen=${generating}/obs=${observer}`);
}

/** True parameter values: the model's own values, overridden by the scenario's draws (sorted by name). */
export function drawTruth(study: ResolvedStudy, model: CandidateModel, rand: RandomStream): Record<string, number> {
  const values = { ...model.base };
  const draws = { ...study.scenario.generate.parameters, ...(study.scenario.generate.perModel[model.name] ?? {}) };
  for (const name of Object.keys(draws).sort()) {
    // Every listed draw consumes one uniform, whether or not the model has the parameter.
    const v = draw(draws[name], rand);
    if (name in values) values[name] = v;
  }
  return values;
}

export function syntheticDataset(study: ResolvedStudy, generating: string, observer: number): { truth: Record<string, number>; full: Dataset } {
  const model = study.candidates.find((c) => c.name === generating)!;
  const rand = observerStream(study, generating, observer);
  const truth = drawTruth(study, model, rand);
  const s = study.scenario;
  const maxT = study.trialCounts[study.trialCounts.length - 1];
  const stimulusDist = createDistribution(s.stimulus ?? s.prior);
  const stimulus = new Float64Array(maxT);
  const condition = new Int32Array(maxT);
  const block: number[] = [];
  // With an explicit trial list, each condition's listed stimuli are dealt in a
  // fresh random order per observer (reshuffled each time they run out), so
  // prefixes stay condition-balanced and use exactly the listed values.
  const list = s.trialList && typeof s.trialList !== 'string' ? s.trialList : null;
  const queues: number[][] = s.conditions.map(() => []);
  const pools: number[][] = s.conditions.map((c) => (list ? list.stimulus.filter((_, i) => list.condition[i] === c.name) : []));
  const nextListed = (c: number): number => {
    if (queues[c].length === 0) {
      const q = pools[c].slice();
      for (let i = q.length - 1; i > 0; i--) {
        const j = Math.floor(rand() * (i + 1));
        [q[i], q[j]] = [q[j], q[i]];
      }
      queues[c] = q;
    }
    return queues[c].pop()!;
  };
  // A block holds each condition as often as its share of the trial split (once by default).
  const blockSpec = s.conditions.flatMap((c, i) => new Array<number>(s.split?.[c.name] ?? 1).fill(i));
  const blockSize = blockSpec.length;
  for (let t = 0; t < maxT; t++) {
    if (t % blockSize === 0) {
      // A fresh random order of the block for every block.
      block.length = 0;
      block.push(...blockSpec);
      for (let i = blockSize - 1; i > 0; i--) {
        const j = Math.floor(rand() * (i + 1));
        [block[i], block[j]] = [block[j], block[i]];
      }
    }
    condition[t] = block[t % blockSize];
    stimulus[t] = list ? nextListed(condition[t]) : stimulusDist.sample(rand);
  }
  const full = simulateResponses(observerFromValues(model, truth), stimulus, condition, rand);
  return { truth, full };
}

export function prefix(data: Dataset, n: number): Dataset {
  return { stimulus: data.stimulus.slice(0, n), condition: data.condition.slice(0, n), response: data.response.slice(0, n) };
}
