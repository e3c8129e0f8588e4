/**
 * Which loss families contain which: analysis reports nested pairs as nested
 * rather than as rivals (a nested member is told apart only through the
 * complexity penalty).
 */
export interface Nesting {
  outer: string;
  inner: string;
  /** Where in the outer family's parameter the inner one sits. */
  at: string;
}

export const NESTED_FAMILIES: readonly Nesting[] = [
  { outer: 'power', inner: 'squared', at: 'exponent = 2' },
  { outer: 'power', inner: 'absolute', at: 'exponent = 1' },
  { outer: 'inverted-gaussian', inner: 'squared', at: 'width → ∞' },
  { outer: 'inverted-gaussian', inner: 'hit-or-miss', at: 'width → 0 (both tend to the posterior mode)' },
  { outer: 'asymmetric-linear', inner: 'absolute', at: 'level = 0.5' },
];

export function nestingOf(a: string, b: string): Nesting | null {
  return NESTED_FAMILIES.find((n) => (n.outer === a && n.inner === b) || (n.outer === b && n.inner === a)) ?? null;
}
