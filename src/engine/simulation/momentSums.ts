/**
 * Mergeable sums for K columns of per-path values (variant × scenario × payoff): count, means and the co-moment
 * matrix C_ij = Σ (y_i − ȳ_i)(y_j − ȳ_j). A batch computes its own sums in two passes; batches merge by the
 * pairwise update of Chan, Golub & LeVeque ("Updating formulae and a pairwise algorithm for computing sample
 * variances", Stanford report STAN-CS-79-773, 1979; eq. 2.1 extended to cross moments):
 *   n = n_a + n_b, δ = ȳ_b − ȳ_a, ȳ = ȳ_a + δ n_b/n, C = C_a + C_b + δ δᵀ n_a n_b / n.
 * Merging in batch order makes the result bit-identical whatever the number of workers.
 */

/** Plain, structured-cloneable sums. */
export interface MomentSums {
  count: number;
  /** Column means (length K). */
  mean: Float64Array;
  /** Co-moment matrix, row-major K × K. */
  comoment: Float64Array;
}

/** Sums of zero paths over K columns. */
export function emptySums(k: number): MomentSums {
  return { count: 0, mean: new Float64Array(k), comoment: new Float64Array(k * k) };
}

/** Sums of one batch: `columns[i][p]` is the value of column i on path p (all of length n). */
export function batchSums(columns: readonly Float64Array[], n: number): MomentSums {
  const k = columns.length;
  const s = emptySums(k);
  s.count = n;
  if (n === 0) return s;
  for (let i = 0; i < k; i++) {
    const c = columns[i]!;
    let t = 0;
    for (let p = 0; p < n; p++) t += c[p]!;
    s.mean[i] = t / n;
  }
  const dev = columns.map((c, i) => {
    const d = new Float64Array(n);
    const mu = s.mean[i]!;
    for (let p = 0; p < n; p++) d[p] = c[p]! - mu;
    return d;
  });
  for (let i = 0; i < k; i++)
    for (let j = i; j < k; j++) {
      const a = dev[i]!;
      const b = dev[j]!;
      let t = 0;
      for (let p = 0; p < n; p++) t += a[p]! * b[p]!;
      s.comoment[i * k + j] = t;
      s.comoment[j * k + i] = t;
    }
  return s;
}

/** Merges `b` into a new sums object (a first, then b). */
export function mergeSums(a: MomentSums, b: MomentSums): MomentSums {
  const k = a.mean.length;
  if (b.mean.length !== k) throw new RangeError(`cannot merge sums of ${k} and ${b.mean.length} columns`);
  if (a.count === 0) return { count: b.count, mean: b.mean.slice(), comoment: b.comoment.slice() };
  if (b.count === 0) return { count: a.count, mean: a.mean.slice(), comoment: a.comoment.slice() };
  const n = a.count + b.count;
  const out = emptySums(k);
  out.count = n;
  const f = (a.count * b.count) / n;
  const d = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    d[i] = b.mean[i]! - a.mean[i]!;
    out.mean[i] = a.mean[i]! + (d[i]! * b.count) / n;
  }
  for (let i = 0; i < k; i++)
    for (let j = 0; j < k; j++)
      out.comoment[i * k + j] = a.comoment[i * k + j]! + b.comoment[i * k + j]! + d[i]! * d[j]! * f;
  return out;
}

/** Read-out of merged sums; variances are sample variances (divisor n − 1), standard errors of the mean. */
export interface ColumnStats {
  readonly count: number;
  readonly columns: number;
  mean(i: number): number;
  variance(i: number): number;
  covariance(i: number, j: number): number;
  /** Standard error of the mean of column i. */
  se(i: number): number;
  /** Standard error of mean(i) − mean(j) from the paired paths: √((V_i + V_j − 2 C_ij)/n). */
  seOfDifference(i: number, j: number): number;
  /** Σ w_i mean(i). */
  meanOfCombination(weights: readonly number[]): number;
  /** Standard error of Σ w_i mean(i): √(wᵀ Σ w / n). */
  seOfCombination(weights: readonly number[]): number;
}

/** Statistics of merged sums. */
export function columnStats(s: MomentSums): ColumnStats {
  const k = s.mean.length;
  const n = s.count;
  const check = (i: number) => {
    if (!(Number.isInteger(i) && i >= 0 && i < k)) throw new RangeError(`column ${i} is not in 0..${k - 1}`);
  };
  const cov = (i: number, j: number) => {
    check(i);
    check(j);
    return n > 1 ? s.comoment[i * k + j]! / (n - 1) : NaN;
  };
  const combo = (w: readonly number[]) => {
    if (w.length !== k) throw new RangeError(`weights must have ${k} entries (got ${w.length})`);
    let q = 0;
    for (let i = 0; i < k; i++) {
      if (w[i] === 0) continue;
      for (let j = 0; j < k; j++) if (w[j] !== 0) q += w[i]! * w[j]! * s.comoment[i * k + j]!;
    }
    return n > 1 ? Math.sqrt(Math.max(0, q / (n - 1) / n)) : NaN;
  };
  return {
    count: n,
    columns: k,
    mean: (i) => (check(i), s.mean[i]!),
    variance: (i) => cov(i, i),
    covariance: cov,
    se: (i) => Math.sqrt(Math.max(0, cov(i, i)) / n),
    seOfDifference: (i, j) => Math.sqrt(Math.max(0, cov(i, i) + cov(j, j) - 2 * cov(i, j)) / n),
    meanOfCombination: (w) => {
      if (w.length !== k) throw new RangeError(`weights must have ${k} entries (got ${w.length})`);
      let m = 0;
      for (let i = 0; i < k; i++) m += w[i]! * s.mean[i]!;
      return m;
    },
    seOfCombination: combo,
  };
}

/**
 * Control-variate estimate of column `target` with column `control` whose exact mean is `known`:
 * ŷ = ȳ − β (x̄ − known), β = Cov(y, x)/Var(x), SE = √((1 − ρ²) Var(y)/n) (Glasserman 2003, Sec. 4.1.1,
 * eqs. (4.3)–(4.5); β estimated from the same paths, whose small bias is common practice to ignore).
 */
export function controlVariate(
  s: MomentSums,
  target: number,
  control: number,
  known: number,
): { mean: number; se: number; beta: number } {
  const st = columnStats(s);
  const vx = st.variance(control);
  const vy = st.variance(target);
  const cxy = st.covariance(target, control);
  const beta = vx > 0 ? cxy / vx : 0;
  const rho2 = vx > 0 && vy > 0 ? (cxy * cxy) / (vx * vy) : 0;
  return {
    mean: st.mean(target) - beta * (st.mean(control) - known),
    se: Math.sqrt(Math.max(0, (1 - rho2) * vy) / s.count),
    beta,
  };
}
