/**
 * Linear least squares min ‖A β − y‖² by Householder QR on a column-scaled design, with a ridge guard for
 * near-collinear designs.
 *
 * Method: Golub & Van Loan (2013), *Matrix Computations*, 4th ed., Alg. 5.2.1 (Householder QR) and Sec. 5.3.3
 * (least squares via QR: solve R β = Qᵀ y). Columns are first scaled to unit Euclidean norm, which does not change
 * the solution but makes the rank test scale-free (Björck 1996, *Numerical Methods for Least Squares Problems*,
 * Sec. 2.8.1, column equilibration). When the scaled R has a diagonal ratio min|r_ii| / max|r_ii| below
 * `rankTolerance`, the problem is re-solved as the ridge (Tikhonov) problem min ‖A β − y‖² + λ‖β‖² (Hoerl & Kennard
 * 1970, 'Ridge regression', Technometrics 12(1)) through the stacked system [R; √λ I] β ≈ [Qᵀy; 0], which is again
 * solved by Householder QR (Björck 1996, Sec. 2.7.4), never by forming normal equations.
 */
import { fail } from '../errors.ts';

/** Result of {@link solveLeastSquares}. */
export interface LeastSquaresResult {
  /** Coefficients β, one per column of the design (0 for a column that is identically zero). */
  coefficients: Float64Array;
  /** Ridge weight λ used on the column-scaled design (0 when no guard was needed). */
  ridge: number;
  /** min|r_ii| / max|r_ii| of the column-scaled R (a reciprocal condition estimate). */
  diagonalRatio: number;
  /** Root-mean-square residual ‖A β − y‖ / √m (units of y). */
  rmsResidual: number;
}

/** Options of {@link solveLeastSquares}. */
export interface LeastSquaresOptions {
  /** Threshold on min|r_ii| / max|r_ii| below which the ridge guard is used (default 1e-9). */
  rankTolerance?: number;
  /** Ridge weight relative to the largest squared diagonal of R when the guard is used (default 1e-12). */
  relativeRidge?: number;
}

/** Applies the Householder reflector stored in v (length m − c, acting on rows c … m−1) to column `col` of `a`. */
function reflect(a: Float64Array, colOffset: number, v: Float64Array, c: number, m: number): void {
  let dot = 0;
  for (let i = c; i < m; i++) dot += v[i - c]! * a[colOffset + i]!;
  const f = 2 * dot;
  for (let i = c; i < m; i++) a[colOffset + i] = a[colOffset + i]! - f * v[i - c]!;
}

/**
 * In-place Householder QR of the m×k column-major matrix `a` (k ≤ m), applied also to the right-hand side `y`.
 * On return the upper triangle of `a` holds R and `y` holds Qᵀ y. (Golub & Van Loan 2013, Alg. 5.2.1.)
 */
function householderQr(a: Float64Array, y: Float64Array, m: number, k: number): void {
  const v = new Float64Array(m);
  for (let c = 0; c < k; c++) {
    const off = c * m;
    let norm = 0;
    for (let i = c; i < m; i++) norm += a[off + i]! * a[off + i]!;
    norm = Math.sqrt(norm);
    if (norm === 0) continue;
    const alpha = a[off + c]! > 0 ? -norm : norm;
    // v = x − α e1, normalised to unit length.
    let vn = 0;
    for (let i = c; i < m; i++) {
      const vi = i === c ? a[off + i]! - alpha : a[off + i]!;
      v[i - c] = vi;
      vn += vi * vi;
    }
    vn = Math.sqrt(vn);
    if (vn === 0) continue;
    for (let i = c; i < m; i++) v[i - c] = v[i - c]! / vn;
    for (let c2 = c + 1; c2 < k; c2++) reflect(a, c2 * m, v, c, m);
    // y as one more column.
    let dot = 0;
    for (let i = c; i < m; i++) dot += v[i - c]! * y[i]!;
    for (let i = c; i < m; i++) y[i] = y[i]! - 2 * dot * v[i - c]!;
    a[off + c] = alpha;
    for (let i = c + 1; i < m; i++) a[off + i] = 0;
  }
}

/** Back substitution R β = c for the k×k upper triangle held column-major with leading dimension `ld`. */
function backSubstitute(r: Float64Array, ld: number, c: Float64Array, k: number): Float64Array {
  const beta = new Float64Array(k);
  for (let i = k - 1; i >= 0; i--) {
    let s = c[i]!;
    for (let j = i + 1; j < k; j++) s -= r[j * ld + i]! * beta[j]!;
    const d = r[i * ld + i]!;
    beta[i] = d === 0 ? 0 : s / d;
  }
  return beta;
}

/**
 * Solves min ‖A β − y‖² for an m×k design given column by column (`columns[c]` has length m).
 * Throws when m < 1, k < 1 or lengths disagree; a column that is identically zero gets coefficient 0.
 */
export function solveLeastSquares(
  columns: Float64Array[],
  y: Float64Array,
  options: LeastSquaresOptions = {},
): LeastSquaresResult {
  const k = columns.length;
  const m = y.length;
  if (k < 1) fail('E_LS_SHAPE', 'design', 'must have at least one column', k);
  if (m < 1) fail('E_LS_SHAPE', 'target', 'must have at least one row', m);
  for (let c = 0; c < k; c++)
    if (columns[c]!.length !== m)
      fail('E_LS_SHAPE', `design[${c}]`, `must have ${m} rows like the target`, columns[c]!.length);
  const rankTolerance = options.rankTolerance ?? 1e-9;
  const relativeRidge = options.relativeRidge ?? 1e-12;

  // Column equilibration (Björck 1996, Sec. 2.8.1); zero columns are left out of the factorisation.
  const keep: number[] = [];
  const scale: number[] = [];
  for (let c = 0; c < k; c++) {
    let s = 0;
    const col = columns[c]!;
    for (let i = 0; i < m; i++) s += col[i]! * col[i]!;
    s = Math.sqrt(s);
    if (s > 0 && Number.isFinite(s)) {
      keep.push(c);
      scale.push(s);
    } else if (!Number.isFinite(s)) fail('E_LS_NOT_FINITE', `design[${c}]`, 'must hold finite numbers', s);
  }
  const coefficients = new Float64Array(k);
  const kk = keep.length;
  if (kk === 0) {
    let ss = 0;
    for (let i = 0; i < m; i++) ss += y[i]! * y[i]!;
    return { coefficients, ridge: 0, diagonalRatio: 0, rmsResidual: Math.sqrt(ss / m) };
  }
  // With fewer rows than columns the stacked ridge system below keeps the problem well posed.
  const rows = Math.max(m, kk);
  const a = new Float64Array(rows * kk);
  for (let c = 0; c < kk; c++) {
    const col = columns[keep[c]!]!;
    const inv = 1 / scale[c]!;
    for (let i = 0; i < m; i++) a[c * rows + i] = col[i]! * inv;
  }
  const qty = new Float64Array(rows);
  qty.set(y);
  householderQr(a, qty, rows, kk);

  let dmax = 0;
  let dmin = Infinity;
  for (let c = 0; c < kk; c++) {
    const d = Math.abs(a[c * rows + c]!);
    dmax = Math.max(dmax, d);
    dmin = Math.min(dmin, d);
  }
  const diagonalRatio = dmax > 0 ? dmin / dmax : 0;
  let ridge = 0;
  let beta: Float64Array;
  if (diagonalRatio >= rankTolerance) {
    beta = backSubstitute(a, rows, qty, kk);
  } else {
    // Ridge guard: QR of the stacked 2k×k system [R; √λ I] with right-hand side [Qᵀy; 0] (Björck 1996, Sec. 2.7.4).
    ridge = relativeRidge * dmax * dmax;
    const sr = Math.sqrt(ridge);
    const n2 = 2 * kk;
    const s = new Float64Array(n2 * kk);
    for (let c = 0; c < kk; c++) {
      for (let i = 0; i <= c; i++) s[c * n2 + i] = a[c * rows + i]!;
      s[c * n2 + kk + c] = sr;
    }
    const rhs = new Float64Array(n2);
    for (let i = 0; i < kk; i++) rhs[i] = qty[i]!;
    householderQr(s, rhs, n2, kk);
    beta = backSubstitute(s, n2, rhs, kk);
  }
  for (let c = 0; c < kk; c++) coefficients[keep[c]!] = beta[c]! / scale[c]!;

  let ss = 0;
  for (let i = 0; i < m; i++) {
    let fit = 0;
    for (let c = 0; c < k; c++) fit += coefficients[c]! * columns[c]![i]!;
    const r = y[i]! - fit;
    ss += r * r;
  }
  return { coefficients, ridge, diagonalRatio, rmsResidual: Math.sqrt(ss / m) };
}
