/**
 * Weighted isotonic (non-decreasing) regression by the pool-adjacent-
 * violators algorithm (Ayer, Brunk, Ewing, Reid & Silverman 1955, Ann. Math.
 * Stat. 26; Barlow, Bartholomew, Bremner & Brunk 1972, Statistical Inference
 * under Order Restrictions, ch. 1). It is the least-squares fit among all
 * non-decreasing sequences: no shape beyond monotonicity is assumed, which is
 * all that nested prefixes promise for accuracy against trial count.
 */
export function isotonic(values: readonly number[], weights: readonly number[]): number[] {
  const blocks: { value: number; weight: number; count: number }[] = [];
  values.forEach((v, i) => {
    blocks.push({ value: v, weight: weights[i], count: 1 });
    while (blocks.length > 1 && blocks[blocks.length - 2].value > blocks[blocks.length - 1].value) {
      const b = blocks.pop()!;
      const a = blocks[blocks.length - 1];
      const w = a.weight + b.weight;
      a.value = w > 0 ? (a.value * a.weight + b.value * b.weight) / w : 0.5 * (a.value + b.value);
      a.weight = w;
      a.count += b.count;
    }
  });
  return blocks.flatMap((b) => new Array<number>(b.count).fill(b.value));
}
