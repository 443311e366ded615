/**
 * Small statistics the decision needs: the standard normal cdf and its inverse, and the standard error of a
 * linear combination of column means. Kept inside the study so the decision rule does not depend on the order in
 * which other layers land.
 */
import { exp, log } from '../math/detMath.ts';

/**
 * erf(x) by its Maclaurin series, Abramowitz & Stegun (1964) eq. 7.1.5, for |x| < 2.5.
 * erfc(x) for x ≥ 2.5 by the continued fraction A&S eq. 7.1.14, evaluated with the modified Lentz method
 * (Press et al., Numerical Recipes, 3rd ed. 2007, sec. 5.2).
 */
function erfcPositive(x: number): number {
  if (x < 2.5) {
    // erf(x) = 2/√π Σ (−1)^n x^(2n+1) / (n! (2n+1))
    let term = x;
    let sum = x;
    const x2 = x * x;
    for (let n = 1; n < 200; n++) {
      term *= -x2 / n;
      const add = term / (2 * n + 1);
      sum += add;
      if (Math.abs(add) < 1e-17 * Math.abs(sum)) break;
    }
    return 1 - (2 / Math.sqrt(Math.PI)) * sum;
  }
  // erfc(x) = e^{−x²}/√π · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + ...)))))
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 500; n++) {
    const an = n / 2;
    d = x + an * d;
    d = Math.abs(d) < tiny ? tiny : d;
    c = x + an / c;
    c = Math.abs(c) < tiny ? tiny : c;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return exp(-x * x) / (Math.sqrt(Math.PI) * f);
}

/** Standard normal cdf Φ(x) = erfc(−x/√2)/2. */
export function normCdf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  const y = x / Math.SQRT2;
  return y >= 0 ? 1 - 0.5 * erfcPositive(y) : 0.5 * erfcPositive(-y);
}

/** Upper tail 1 − Φ(x), accurate far in the tail. */
export function normSf(x: number): number {
  return normCdf(-x);
}

/**
 * Inverse of Φ for p in (0, 1): a bracketed Newton iteration on Φ (Φ' = φ), started from the logistic
 * approximation; converges to the accuracy of Φ itself.
 */
export function normQuantile(p: number): number {
  if (!(p > 0 && p < 1)) return p === 0 ? -Infinity : p === 1 ? Infinity : NaN;
  if (p > 0.5) return -normQuantile(1 - p);
  let lo = -40;
  let hi = 0;
  let x = log(p / (1 - p)) / 1.702; // logistic approximation of Φ as a start
  x = Math.max(-38, Math.min(0, x));
  for (let i = 0; i < 100; i++) {
    const f = normCdf(x) - p;
    if (f > 0) hi = x;
    else lo = x;
    const pdf = exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
    let next = x - f / pdf;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) < 1e-15 * Math.max(1, Math.abs(x))) return next;
    x = next;
  }
  return x;
}

/**
 * Sample statistics of K paired columns (one value per path and column, e.g. the discounted payoff of each
 * model variant on the same random numbers).
 */
export interface ColumnStats {
  /** Number of paths. */
  n: number;
  /** Column means. */
  mean: number[];
  /** Sample covariance of the per-path values (divisor n − 1), K × K. */
  cov: number[][];
}

/** A value with its Monte Carlo standard error. */
export interface Estimate {
  value: number;
  se: number;
}

/**
 * Mean and standard error of Σ w_k X_k over paired columns: value = wᵀ m, SE = √(wᵀ Σ w / n),
 * the usual variance of a linear combination of correlated means (common practice; e.g. Glasserman 2004,
 * Monte Carlo Methods in Financial Engineering, sec. 4.2 on common random numbers).
 */
export function combination(stats: ColumnStats, weights: Record<number, number> | number[]): Estimate {
  const idx: number[] = [];
  const w: number[] = [];
  for (const [k, v] of Object.entries(weights)) {
    if (v !== 0) {
      idx.push(Number(k));
      w.push(v);
    }
  }
  let value = 0;
  let q = 0;
  for (let a = 0; a < idx.length; a++) {
    value += w[a]! * stats.mean[idx[a]!]!;
    for (let b = 0; b < idx.length; b++) q += w[a]! * w[b]! * stats.cov[idx[a]!]![idx[b]!]!;
  }
  return { value, se: Math.sqrt(Math.max(0, q) / Math.max(1, stats.n)) };
}

/**
 * One-pass accumulator of K paired columns (sums and cross-products, merged in batch order).
 * Values are centred on the first batch's means (a shifted-data variance, Chan, Golub & LeVeque 1983,
 * "Algorithms for computing the sample variance"), which keeps the cross-products well conditioned.
 */
export class ColumnAccumulator {
  readonly k: number;
  private n = 0;
  private shift: Float64Array | null = null;
  private readonly s1: Float64Array;
  private readonly s2: Float64Array;
  constructor(k: number) {
    this.k = k;
    this.s1 = new Float64Array(k);
    this.s2 = new Float64Array(k * k);
  }
  /** Adds nPaths rows; `columns[c][p]` is column c on path p. */
  add(columns: ArrayLike<number>[]): void {
    const k = this.k;
    const np = columns[0]?.length ?? 0;
    if (np === 0) return;
    if (!this.shift) {
      this.shift = new Float64Array(k);
      for (let c = 0; c < k; c++) {
        let s = 0;
        for (let p = 0; p < np; p++) s += columns[c]![p]!;
        this.shift[c] = s / np;
      }
    }
    const sh = this.shift;
    const d = new Float64Array(k);
    for (let p = 0; p < np; p++) {
      for (let c = 0; c < k; c++) d[c] = columns[c]![p]! - sh[c]!;
      for (let a = 0; a < k; a++) {
        const da = d[a]!;
        this.s1[a]! += da;
        const row = a * k;
        for (let b = a; b < k; b++) this.s2[row + b]! += da * d[b]!;
      }
    }
    this.n += np;
  }
  /** Current statistics. */
  stats(): ColumnStats {
    const k = this.k;
    const n = this.n;
    const mean: number[] = [];
    const cov: number[][] = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    for (let a = 0; a < k; a++) mean.push((this.shift?.[a] ?? 0) + (n > 0 ? this.s1[a]! / n : 0));
    if (n > 1) {
      for (let a = 0; a < k; a++)
        for (let b = a; b < k; b++) {
          const c = (this.s2[a * k + b]! - (this.s1[a]! * this.s1[b]!) / n) / (n - 1);
          cov[a]![b] = c;
          cov[b]![a] = c;
        }
    }
    return { n, mean, cov };
  }
}
