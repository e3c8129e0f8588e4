/**
 * Seeded random streams. A stream is a function returning uniforms in [0, 1);
 * every sampler in the project takes one as an argument, so a job's draws depend
 * only on its seed (never on Math.random or on worker order).
 */
import { createHash } from 'node:crypto';
import seedrandom from 'seedrandom';

export type RandomStream = () => number;

/**
 * A reproducible stream from any string key (Alea generator from seedrandom).
 * The key is hashed (SHA-256) before it seeds Alea: Alea's own string seeding
 * maps keys that differ in one digit (".../obs=3", ".../obs=4") to first
 * outputs that march in near-equal steps, so the first parameter drawn for
 * successive synthetic observers formed a lattice rather than a random sample.
 */
export function streamFromKey(key: string): RandomStream {
  const prng = seedrandom.alea(createHash('sha256').update(key).digest('hex'));
  return () => prng.quick();
}

/** Standard normal draw by the polar Box–Muller method (Marsaglia & Bray 1964). */
export function drawStandardNormal(rand: RandomStream): number {
  for (;;) {
    const u = 2 * rand() - 1;
    const v = 2 * rand() - 1;
    const s = u * u + v * v;
    if (s > 0 && s < 1) return u * Math.sqrt((-2 * Math.log(s)) / s);
  }
}

/** Gamma(shape, 1) draw by Marsaglia & Tsang (2000), with the shape < 1 boost. */
export function drawGamma(shape: number, rand: RandomStream): number {
  if (shape < 1) {
    const u = rand();
    return drawGamma(shape + 1, rand) * Math.pow(u > 0 ? u : Number.MIN_VALUE, 1 / shape);
  }
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = drawStandardNormal(rand);
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = rand();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}
