/**
 * Bracketing search on increasing abscissae (binary search; common practice).
 */

/**
 * Index `lo` of the interval [xs[lo], xs[lo + 1]) that holds `x`, for increasing `xs`, by bisection: clamped to
 * [0, n − 2], so x below xs[1] gives 0 and x at or above xs[n − 2] gives n − 2 (0 when n ≤ 2). Callers handle
 * extrapolation themselves. Plain arrays only, so every caller's element loads stay of one kind.
 */
export function bracketIndex(xs: readonly number[], x: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! <= x) lo = mid;
    else hi = mid;
  }
  return lo;
}
