/**
 * Dense symmetric linear algebra for correlation matrices: eigen-decomposition, Cholesky with positive
 * semi-definite pivots, and the nearest correlation matrix.
 *
 * Sources:
 * - Cyclic Jacobi eigenvalue method with the stable rotation t = sgn(θ)/(|θ| + √(θ² + 1)):
 *   G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed. (2013), §8.5 (Algorithms 8.5.1–8.5.3).
 * - Cholesky (outer-product form): Golub & Van Loan (2013), §4.2, Algorithm 4.2.1; a zero pivot is accepted when
 *   the rest of its column is zero too (the matrix is then singular but positive semi-definite).
 * - Strict Cholesky solve and inverse for the small positive definite normal equations of a least-squares fit
 *   (Golub & Van Loan 2013, §4.2.5): the factor is `null` as soon as a pivot is not > 0, so a damped optimiser can
 *   raise its damping instead of catching an error (the PSD-tolerant {@link cholesky} is for correlation matrices).
 * - Nearest correlation matrix: N. J. Higham, "Computing the nearest correlation matrix — a problem from finance",
 *   IMA J. Numer. Anal. 22 (2002) 329–343, Algorithm 3.3 (alternating projections with Dykstra's correction,
 *   in the W-norm with W = diag(w)).
 */
import { EngineError, issue, type FieldIssue } from '../errors.ts';

/** Eigenvalues (ascending) and eigenvectors: `vectors[i][k]` is component i of the eigenvector of `values[k]`. */
export interface SymmetricEigen {
  values: number[];
  vectors: number[][];
}

function copy(m: number[][]): number[][] {
  return m.map((row) => row.slice());
}

function requireSquare(m: number[][], field: string): number {
  const n = m.length;
  for (let i = 0; i < n; i++) {
    const row = m[i];
    if (!Array.isArray(row) || row.length !== n)
      throw new EngineError('E_NOT_SQUARE', `${field}[${i}] must have ${n} entries (got ${row?.length})`, [
        issue('E_NOT_SQUARE', `${field}[${i}]`, `must have ${n} entries (a square matrix)`, row?.length),
      ]);
    for (let j = 0; j < n; j++)
      if (!Number.isFinite(row[j]))
        throw new EngineError(
          'E_NOT_FINITE',
          `${field}[${i}][${j}] must be a finite number (got ${row[j]})`,
          [issue('E_NOT_FINITE', `${field}[${i}][${j}]`, 'must be a finite number', row[j])],
        );
  }
  return n;
}

/**
 * Eigen-decomposition of a symmetric matrix by the cyclic Jacobi method (Golub & Van Loan 2013, §8.5.3).
 * Only the upper triangle's symmetric part is used: the input is symmetrised as (A + Aᵀ)/2.
 */
export function symmetricEigen(m: number[][]): SymmetricEigen {
  const n = requireSquare(m, 'matrix');
  const a = m.map((row, i) => row.map((v, j) => 0.5 * (v + m[j]![i]!)));
  const v: number[][] = Array.from({ length: n }, (_, i) =>
    Array.from({ length: n }, (_, j) => (i === j ? 1 : 0)),
  );
  let frob = 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) frob += a[i]![j]! * a[i]![j]!;
  const stop = 1e-30 * frob;
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += a[i]![j]! * a[i]![j]!;
    if (off <= stop) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = a[p]![q]!;
        if (apq === 0) continue;
        const theta = (a[q]![q]! - a[p]![p]!) / (2 * apq);
        const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = a[k]![p]!;
          const akq = a[k]![q]!;
          a[k]![p] = c * akp - s * akq;
          a[k]![q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = a[p]![k]!;
          const aqk = a[q]![k]!;
          a[p]![k] = c * apk - s * aqk;
          a[q]![k] = s * apk + c * aqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = v[k]![p]!;
          const vkq = v[k]![q]!;
          v[k]![p] = c * vkp - s * vkq;
          v[k]![q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => a[i]![i]! - a[j]![j]!);
  return {
    values: order.map((i) => a[i]![i]!),
    vectors: v.map((row) => order.map((k) => row[k]!)),
  };
}

/** Smallest eigenvalue of a symmetric matrix. */
export function minEigenvalue(m: number[][]): number {
  if (m.length === 0) return Infinity;
  return symmetricEigen(m).values[0]!;
}

/** True when the smallest eigenvalue is ≥ −tol (default tol 1e-12 times the largest |eigenvalue|, at least 1e-12). */
export function isPsd(m: number[][], tol?: number): boolean {
  if (m.length === 0) return true;
  const { values } = symmetricEigen(m);
  const scale = Math.max(1, Math.abs(values[0]!), Math.abs(values[values.length - 1]!));
  return values[0]! >= -(tol ?? 1e-12 * scale);
}

/** V·diag(λ)·Vᵀ. */
function recompose(vectors: number[][], values: number[]): number[][] {
  const n = values.length;
  const out: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += vectors[i]![k]! * values[k]! * vectors[j]![k]!;
      out[i]![j] = s;
      out[j]![i] = s;
    }
  return out;
}

/** Projection onto the PSD cone in the Frobenius norm: negative eigenvalues set to zero (Higham 2002, Thm 3.1 / eq. 3.2). */
export function clipToPsd(m: number[][]): number[][] {
  const { values, vectors } = symmetricEigen(m);
  return recompose(
    vectors,
    values.map((l) => Math.max(l, 0)),
  );
}

/** D^{-1/2} X D^{-1/2} with D = diag(X): a PSD matrix scaled to unit diagonal (zero diagonal entries become 1). */
function scaleToUnitDiagonal(x: number[][]): number[][] {
  const d = x.map((row, i) => (row[i]! > 0 ? 1 / Math.sqrt(row[i]!) : 0));
  return x.map((row, i) =>
    row.map((v, j) =>
      i === j ? 1 : d[i] === 0 || d[j] === 0 ? 0 : Math.max(-1, Math.min(1, v * d[i]! * d[j]!)),
    ),
  );
}

/** Options of {@link nearestCorrelation}. */
export interface NearestCorrelationOptions {
  /** Stopping tolerance on the relative change between the two projections (default 1e-10). */
  tol?: number;
  /** Largest number of iterations (default 2000). */
  maxIter?: number;
  /** Positive diagonal weights w (W = diag(w)); a larger weight keeps that row/column closer to the input. */
  weights?: number[];
}

/** Result of {@link nearestCorrelation}. */
export interface NearestCorrelationResult {
  /** Symmetric, unit diagonal, positive semi-definite. */
  matrix: number[][];
  iterations: number;
  converged: boolean;
  /** Frobenius distance ‖A − X‖_F from the input. */
  distance: number;
}

/**
 * Nearest correlation matrix in the W-norm ‖W^{1/2}(A − X)W^{1/2}‖_F, W = diag(weights)
 * (Higham 2002, Algorithm 3.3: alternating projections onto S (PSD, in the W-norm) and U (unit diagonal), with
 * Dykstra's correction ΔS applied before the projection onto S).
 * A final clean-up clips eigenvalues below zero and rescales to unit diagonal, so the returned matrix is exactly
 * unit diagonal and PSD to rounding.
 */
export function nearestCorrelation(
  a: number[][],
  options: NearestCorrelationOptions = {},
): NearestCorrelationResult {
  const n = requireSquare(a, 'matrix');
  const tol = options.tol ?? 1e-10;
  const maxIter = options.maxIter ?? 2000;
  const w = options.weights ?? new Array<number>(n).fill(1);
  if (w.length !== n || w.some((x) => !(Number.isFinite(x) && x > 0)))
    throw new EngineError('E_WEIGHTS', `weights must be ${n} finite numbers > 0`, [
      issue('E_WEIGHTS', 'weights', `must be ${n} finite numbers > 0`, w),
    ]);
  const sw = w.map(Math.sqrt);
  const sym = a.map((row, i) => row.map((v, j) => 0.5 * (v + a[j]![i]!)));
  // P_S in the W-norm: X = W^{-1/2} (W^{1/2} R W^{1/2})_+ W^{-1/2} (Higham 2002, Theorem 3.2).
  const projectS = (r: number[][]): number[][] => {
    const scaled = r.map((row, i) => row.map((v, j) => sw[i]! * v * sw[j]!));
    const c = clipToPsd(scaled);
    return c.map((row, i) => row.map((v, j) => v / (sw[i]! * sw[j]!)));
  };
  let y = copy(sym);
  let ds: number[][] = sym.map((row) => row.map(() => 0));
  let x = copy(sym);
  let iterations = 0;
  let converged = false;
  for (; iterations < maxIter; iterations++) {
    const r = y.map((row, i) => row.map((v, j) => v - ds[i]![j]!));
    x = projectS(r);
    ds = x.map((row, i) => row.map((v, j) => v - r[i]![j]!));
    const yNew = x.map((row, i) => row.map((v, j) => (i === j ? 1 : v)));
    let diffXY = 0;
    let normY = 0;
    let diffY = 0;
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        diffXY += (yNew[i]![j]! - x[i]![j]!) * (yNew[i]![j]! - x[i]![j]!);
        diffY += (yNew[i]![j]! - y[i]![j]!) * (yNew[i]![j]! - y[i]![j]!);
        normY += yNew[i]![j]! * yNew[i]![j]!;
      }
    y = yNew;
    if (Math.sqrt(diffXY / normY) <= tol && Math.sqrt(diffY / normY) <= tol) {
      converged = true;
      iterations++;
      break;
    }
  }
  const matrix = scaleToUnitDiagonal(clipToPsd(y));
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const m = 0.5 * (matrix[i]![j]! + matrix[j]![i]!);
      matrix[i]![j] = m;
      matrix[j]![i] = m;
    }
  let dist = 0;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) dist += (matrix[i]![j]! - sym[i]![j]!) * (matrix[i]![j]! - sym[i]![j]!);
  return { matrix, iterations, converged, distance: Math.sqrt(dist) };
}

function isUnitDiagonal(m: number[][]): boolean {
  return m.every((row, i) => Math.abs(row[i]! - 1) <= 1e-12);
}

/**
 * Lower-triangular L with L·Lᵀ = m for a symmetric positive semi-definite m (Golub & Van Loan 2013, Alg. 4.2.1).
 * A pivot that is zero to rounding (two perfectly correlated drivers) gives a zero column, provided the rest of
 * that column is zero too. Otherwise throws EngineError `E_NOT_PSD` naming `field` and the most negative
 * eigenvalue; the issue's value carries `{ minEigenvalue, nearest }`, the nearest correlation matrix (Higham 2002)
 * for a unit-diagonal input, or the eigenvalue-clipped matrix for a covariance, so a user can accept it.
 */
export function cholesky(m: number[][], field: string): number[][] {
  const n = requireSquare(m, field);
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const scale = Math.max(1, Math.abs(m[i]![j]!));
      if (Math.abs(m[i]![j]! - m[j]![i]!) > 1e-12 * scale)
        throw new EngineError('E_NOT_SYMMETRIC', `${field}[${i}][${j}] must equal ${field}[${j}][${i}]`, [
          issue(
            'E_NOT_SYMMETRIC',
            `${field}[${i}][${j}]`,
            `must equal ${field}[${j}][${i}] = ${m[j]![i]}`,
            m[i]![j],
            'make the matrix symmetric',
          ),
        ]);
    }
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(m[i]![i]!));
  const zeroTol = 1e-12 * Math.max(1, maxDiag);
  const l: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  let failed = false;
  for (let j = 0; j < n && !failed; j++) {
    let d = m[j]![j]!;
    for (let k = 0; k < j; k++) d -= l[j]![k]! * l[j]![k]!;
    if (d > zeroTol) {
      const ljj = Math.sqrt(d);
      l[j]![j] = ljj;
      for (let i = j + 1; i < n; i++) {
        let s = m[i]![j]!;
        for (let k = 0; k < j; k++) s -= l[i]![k]! * l[j]![k]!;
        l[i]![j] = s / ljj;
      }
    } else if (d >= -zeroTol) {
      // Zero pivot: the column below must vanish too, else the matrix is indefinite.
      l[j]![j] = 0;
      for (let i = j + 1; i < n; i++) {
        let s = m[i]![j]!;
        for (let k = 0; k < j; k++) s -= l[i]![k]! * l[j]![k]!;
        if (Math.abs(s) > 1e-8 * Math.max(1, maxDiag)) failed = true;
      }
    } else {
      failed = true;
    }
  }
  if (!failed) return l;
  const minEig = minEigenvalue(m);
  const nearest = isUnitDiagonal(m) ? nearestCorrelation(m).matrix : clipToPsd(m);
  const what = isUnitDiagonal(m)
    ? 'the nearest correlation matrix (Higham 2002)'
    : 'the eigenvalue-clipped matrix';
  const i = notPsdIssue(field, minEig, nearest, what);
  throw new EngineError('E_NOT_PSD', i.message, [i]);
}

/**
 * The issue for a matrix that is not positive semi-definite: `value` is `{ minEigenvalue, nearest }` so a caller
 * (the UI) can offer the repaired matrix.
 */
export function notPsdIssue(field: string, minEig: number, nearest: number[][], what: string): FieldIssue {
  const rule = 'must be positive semi-definite';
  const message =
    `${field} ${rule} (its most negative eigenvalue is ${minEig.toPrecision(6)}): ` +
    `correct the entries or accept ${what} offered with this error`;
  return {
    code: 'E_NOT_PSD',
    field,
    rule,
    value: { minEigenvalue: minEig, nearest },
    message,
    severity: 'error',
  };
}

/** L·Lᵀ, for checks. */
export function multiplyLowerTranspose(l: number[][]): number[][] {
  const n = l.length;
  const out: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k <= Math.min(i, j); k++) s += l[i]![k]! * l[j]![k]!;
      out[i]![j] = s;
    }
  return out;
}

/**
 * Lower Cholesky factor L (L·Lᵀ = a) of a symmetric positive definite matrix, or `null` when a pivot is not > 0 or
 * not finite (Golub & Van Loan 2013, §4.2.5). For the small systems of a least-squares fit (n ≤ ~20).
 */
export function spdCholesky(a: readonly (readonly number[])[]): number[][] | null {
  const n = a.length;
  const L = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let s = a[i]![j]!;
      for (let k = 0; k < j; k++) s -= L[i]![k]! * L[j]![k]!;
      if (i === j) {
        if (!(s > 0) || !Number.isFinite(s)) return null;
        L[i]![i] = Math.sqrt(s);
      } else L[i]![j] = s / L[j]![j]!;
    }
  return L;
}

/** Solves L·Lᵀ·x = b by forward and back substitution, L from {@link spdCholesky}. */
export function spdSolve(L: readonly (readonly number[])[], b: readonly number[]): number[] {
  const n = L.length;
  const y = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= L[i]![k]! * y[k]!;
    y[i] = s / L[i]![i]!;
  }
  const x = new Array<number>(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i]!;
    for (let k = i + 1; k < n; k++) s -= L[k]![i]! * x[k]!;
    x[i] = s / L[i]![i]!;
  }
  return x;
}

/** Inverse of a symmetric positive definite matrix (column by column through {@link spdCholesky}), or `null`. */
export function spdInverse(a: readonly (readonly number[])[]): number[][] | null {
  const L = spdCholesky(a);
  if (!L) return null;
  const n = a.length;
  const cols: number[][] = [];
  for (let j = 0; j < n; j++) {
    const e = new Array<number>(n).fill(0);
    e[j] = 1;
    cols.push(spdSolve(L, e));
  }
  return cols.map((_, i) => cols.map((c) => c[i]!));
}
