/**
 * The sweep's rounds (src/engine/sizeRounds.ts) against an independent
 * reference: each point of the sweep follows its own path (start with the
 * initial observers; while its anytime-valid interval still contains the
 * target and it is below the cap, add a batch), because a point's decision
 * reads only its own lines. Replaying the rounds on the lines, round after
 * round as a cluster merges them, must give every point the observers of that
 * path, every design the number of rounds of its longest path, and must not
 * be swayed by lines beyond the plan (a resumed folder may hold some) or by
 * their order. Property-based (fast-check, pinned seed) on fabricated lines.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import type { JobLine } from '../src/analysis/types.js';
import type { ResolvedStudy } from '../src/engine/resolve.js';
import { firstRound, replayRounds, roundJobs, splitRoundKey, sweepHash, undecided, type SweepDesign, type SweepSettings } from '../src/engine/sizeRounds.js';
import { modelSuccess } from '../src/analysis/sizingSuccess.js';
import { fakeLine } from './helpers/fakeLines.js';

const MODELS = ['a', 'b'];

function study(counts: number[], hash: string): ResolvedStudy {
  return { scenario: { name: 'fabricated', seed: 1, fitting: { criterion: 'bic', margin: 0 } }, candidates: MODELS.map((name) => ({ name })), generating: MODELS, trialCounts: counts, hash } as unknown as ResolvedStudy;
}

const line = (generating: string, observer: number, trials: number, winner: string) => fakeLine(generating, observer, trials, winner, MODELS);

const judge = modelSuccess(MODELS, { criterion: 'bic', margin: 0 });

describe('sweep rounds', () => {
  it('give every point the observers of its own path, round by round, whatever extra lines or order', () => {
    fc.assert(
      fc.property(
        fc.record({
          initial: fc.integer({ min: 1, max: 6 }),
          batch: fc.integer({ min: 1, max: 6 }),
          extra: fc.integer({ min: 0, max: 12 }),
          target: fc.constantFrom(0.5, 0.7, 0.8),
          /** Per design, generating model and count: the share of observers the truth comes back for. */
          rates: fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 2 * 2 * 2, maxLength: 2 * 2 * 2 }),
        }),
        ({ initial, batch, extra, target, rates }) => {
          const settings: SweepSettings = { trials: [20, 40], initial, batch, max: initial + extra, target, alpha: 0.05, seed: null, parameter: null };
          const designs: SweepDesign[] = [
            { variant: 'base', study: study([20, 40], 'a'.repeat(64)) },
            { variant: 'wide', study: study([20, 40], 'b'.repeat(64)) },
          ];
          // Observer o of a point is right when o·rate crosses an integer: a fixed, deterministic outcome.
          const rateOf = (d: number, g: number, t: number) => rates[d * 4 + g * 2 + t];
          const outcome = (d: number, g: string, t: number, o: number) => {
            const r = rateOf(d, MODELS.indexOf(g), [20, 40].indexOf(t));
            return Math.floor((o + 1) * r) > Math.floor(o * r);
          };
          const lineOf = (d: number, g: string, t: number, o: number) => line(g, o, t, outcome(d, g, t, o) ? g : MODELS.find((m) => m !== g)!);
          // Reference: each point's own path.
          const expected = new Map<string, number>();
          const rounds = [0, 0];
          designs.forEach((_, d) =>
            MODELS.forEach((g) =>
              [20, 40].forEach((t) => {
                let n = Math.min(initial, settings.max);
                let r = 1;
                while (n < settings.max && undecided(Array.from({ length: n }, (_, o) => lineOf(d, g, t, o)), judge, target, 0.05)) {
                  n = Math.min(settings.max, n + batch);
                  r++;
                }
                expected.set(`${d}|${g}|${t}`, n);
                rounds[d] = Math.max(rounds[d], r);
              }),
            ),
          );
          // Round by round, as merges add each round's lines.
          const held = new Map<string, JobLine[]>(designs.map((d) => [d.variant, []]));
          let replay = replayRounds(designs, settings, (v) => held.get(v)!);
          expect(replay.next).toEqual(firstRound(designs, settings));
          for (let guard = 0; replay.next && guard < 100; guard++) {
            for (const j of roundJobs(replay.next)) {
              const d = designs.findIndex((x) => x.variant === j.design);
              held.get(j.design)!.unshift(lineOf(d, j.spec.generating, j.spec.trials, j.spec.observer));
            }
            replay = replayRounds(designs, settings, (v) => held.get(v)!);
          }
          expect(replay.next).toBeNull();
          designs.forEach((d, i) => {
            expect(replay.rounds.get(d.variant)).toBe(rounds[i]);
            for (const g of MODELS)
              for (const t of [20, 40]) expect(replay.lines.get(d.variant)!.filter((l) => l.generating === g && l.trials === t).length).toBe(expected.get(`${i}|${g}|${t}`));
          });
          // Every observer up to the cap already on disk (a resumed folder): same decisions, extra lines left out.
          const all = (d: number) => MODELS.flatMap((g) => [20, 40].flatMap((t) => Array.from({ length: settings.max + 2 }, (_, o) => lineOf(d, g, t, o))));
          const full = replayRounds(designs, settings, (v) => all(designs.findIndex((x) => x.variant === v)));
          expect(full.next).toBeNull();
          expect(full.lines).toEqual(replay.lines);
          expect(full.rounds).toEqual(replay.rounds);
          expect(full.done).toEqual(replay.done);
          // Capped points: at the cap and still undecided.
          for (const c of full.capped) expect(expected.get(`${designs.findIndex((x) => x.variant === c.design)}|${c.generating}|${c.trials}`)).toBe(settings.max);
        },
      ),
      { seed: 20261202, numRuns: 60 },
    );
  });

  it('keys a round by design, so a variant and the base never share a key, and the sweep hash covers settings and designs', () => {
    const designs: SweepDesign[] = [
      { variant: 'base', study: study([20, 40], 'a'.repeat(64)) },
      { variant: 'narrow', study: study([20, 40], 'b'.repeat(64)) },
    ];
    const s: SweepSettings = { trials: [20, 40], initial: 2, batch: 2, max: 4, target: 0.8, alpha: 0.05, seed: null, parameter: null };
    const jobs = roundJobs(firstRound(designs, s));
    expect(jobs.length).toBe(2 * 2 * 2 * 2);
    expect(new Set(jobs.map((j) => j.key)).size).toBe(jobs.length);
    expect(splitRoundKey(jobs[0].key)).toEqual({ design: 'base', key: 'gen=a/obs=0000/trials=20' });
    expect(sweepHash(designs, s)).not.toBe(sweepHash(designs, { ...s, batch: 3 }));
    expect(sweepHash(designs, s)).not.toBe(sweepHash([designs[0]], s));
    expect(sweepHash(designs, s)).toBe(sweepHash(designs, { ...s }));
  });
});
