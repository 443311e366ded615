/**
 * Dense linear algebra for the small symmetric systems of a least-squares fit (n ≤ ~20 parameters):
 * Cholesky solve and symmetric eigenvalues by cyclic Jacobi rotations (G.H. Golub, C.F. Van Loan,
 * "Matrix Computations", 4th ed., 2013, Sec. 4.2.5 (Cholesky) and Sec. 8.5.2 (cyclic Jacobi)).
 */

/** Lower Cholesky factor of a symmetric positive definite matrix, or null when a pivot is not > 0. */
export function choleskyLower(a: readonly (readonly number[])[]): number[][] | null {
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

/** Solves L Lᵀ x = b. */
export function choleskySolve(L: readonly (readonly number[])[], b: readonly number[]): number[] {
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

/** Inverse of a symmetric positive definite matrix, or null when it is not positive definite. */
export function spdInverse(a: readonly (readonly number[])[]): number[][] | null {
  const L = choleskyLower(a);
  if (!L) return null;
  const n = a.length;
  const cols: number[][] = [];
  for (let j = 0; j < n; j++) {
    const e = new Array<number>(n).fill(0);
    e[j] = 1;
    cols.push(choleskySolve(L, e));
  }
  return cols.map((_, i) => cols.map((c) => c[i]!));
}

/** Eigenvalues of a symmetric matrix (ascending) by cyclic Jacobi rotations. */
export function symmetricEigenvalues(a: readonly (readonly number[])[]): number[] {
  const n = a.length;
  const m = a.map((r) => r.slice());
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off += m[p]![q]! ** 2;
    if (off < 1e-30) break;
    for (let p = 0; p < n; p++)
      for (let q = p + 1; q < n; q++) {
        const apq = m[p]![q]!;
        if (Math.abs(apq) < 1e-300) continue;
        const theta = (m[q]![q]! - m[p]![p]!) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = m[k]![p]!;
          const akq = m[k]![q]!;
          m[k]![p] = c * akp - s * akq;
          m[k]![q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = m[p]![k]!;
          const aqk = m[q]![k]!;
          m[p]![k] = c * apk - s * aqk;
          m[q]![k] = s * apk + c * aqk;
        }
      }
  }
  return m.map((r, i) => r[i]!).sort((x, y) => x - y);
}
