/**
 * Exact Shapley attribution of the richest variant's price change over the 2^k ladder.
 * The "game" is v(S) = price(base + factors in S) − price(base); player f's value is (Shapley 1953,
 * "A value for n-person games", Contributions to the Theory of Games II, eq. for φ_i):
 *   φ_f = Σ_{S ⊆ N∖{f}} |S|! (k − |S| − 1)! / k! · (v(S ∪ {f}) − v(S)).
 * Each φ_f is a fixed linear combination of the variant means, so its SE follows from the full covariance of the
 * paired variant values (`combination`). The φ_f add up to v(N) (efficiency).
 */
import type { ColumnStats, Estimate } from './stats.ts';
import { combination } from './stats.ts';

function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

function popcount(m: number): number {
  let c = 0;
  for (let x = m; x; x &= x - 1) c++;
  return c;
}

/**
 * Shapley weights of factor `f` (bit f of a subset mask) over the variants indexed by mask: returns w with
 * φ_f = Σ_mask w[mask] · price(mask). Masks run over 0 … 2^k − 1.
 */
export function shapleyWeights(k: number, f: number): number[] {
  const w = new Array<number>(1 << k).fill(0);
  const kf = factorial(k);
  const bit = 1 << f;
  for (let s = 0; s < 1 << k; s++) {
    if (s & bit) continue;
    const size = popcount(s);
    const c = (factorial(size) * factorial(k - size - 1)) / kf;
    w[s | bit]! += c;
    w[s]! -= c;
  }
  return w;
}

/** Shapley value of each factor with its standard error; `column(mask)` maps a subset mask to its stats column. */
export function shapley(args: {
  factors: string[];
  stats: ColumnStats;
  column: (mask: number) => number;
}): { factor: string; value: number; se: number }[] {
  const k = args.factors.length;
  return args.factors.map((factor, f) => {
    const w = shapleyWeights(k, f);
    const weights: Record<number, number> = {};
    w.forEach((x, mask) => {
      if (x !== 0) {
        const col = args.column(mask);
        weights[col] = (weights[col] ?? 0) + x;
      }
    });
    const e: Estimate = combination(args.stats, weights);
    return { factor, value: e.value, se: e.se };
  });
}
