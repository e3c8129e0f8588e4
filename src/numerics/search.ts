/** Index i with v[i] ≤ t < v[i+1] in a sorted array, clamped to [0, n−2], by bisection. */
export function segmentIndex(v: ArrayLike<number>, t: number): number {
  let lo = 0;
  let hi = v.length - 2;
  if (t <= v[0]) return 0;
  if (t >= v[hi]) return hi;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (v[mid] <= t) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}
