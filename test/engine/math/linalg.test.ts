import { describe, it, expect } from 'vitest';
import {
  cholesky,
  clipToPsd,
  isPsd,
  minEigenvalue,
  multiplyLowerTranspose,
  nearestCorrelation,
  spdCholesky,
  spdInverse,
  spdSolve,
  symmetricEigen,
} from '../../../src/engine/math/linalg.ts';
import { EngineError } from '../../../src/engine/errors.ts';

function maxAbsDiff(a: number[][], b: number[][]): number {
  let m = 0;
  for (let i = 0; i < a.length; i++)
    for (let j = 0; j < a.length; j++) m = Math.max(m, Math.abs(a[i]![j]! - b[i]![j]!));
  return m;
}
function frob(a: number[][], b: number[][]): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) for (let j = 0; j < a.length; j++) s += (a[i]![j]! - b[i]![j]!) ** 2;
  return Math.sqrt(s);
}
function expectMatrix(label: string, computed: number[][], expected: number[][], tol: number): void {
  const d = maxAbsDiff(computed, expected);
  if (!(d <= tol))
    throw new Error(
      `${label}: expected ${JSON.stringify(expected)}, computed ${JSON.stringify(computed)}, max diff ${d} > ${tol}`,
    );
  expect(d).toBeLessThanOrEqual(tol);
}

describe('symmetricEigen', () => {
  it('finds the eigenvalues 2 − 2cos(kπ/(n+1)) of tridiag(−1, 2, −1) (closed form, common practice)', () => {
    const n = 6;
    const m = Array.from({ length: n }, (_, i) =>
      Array.from({ length: n }, (_, j) => (i === j ? 2 : Math.abs(i - j) === 1 ? -1 : 0)),
    );
    const { values, vectors } = symmetricEigen(m);
    for (let k = 1; k <= n; k++)
      expect(Math.abs(values[k - 1]! - (2 - 2 * Math.cos((k * Math.PI) / (n + 1))))).toBeLessThan(1e-14);
    // Eigenvectors: M v = λ v and orthonormal.
    for (let k = 0; k < n; k++) {
      for (let i = 0; i < n; i++) {
        let mv = 0;
        for (let j = 0; j < n; j++) mv += m[i]![j]! * vectors[j]![k]!;
        expect(Math.abs(mv - values[k]! * vectors[i]![k]!)).toBeLessThan(1e-13);
      }
      for (let l = 0; l < n; l++) {
        let dot = 0;
        for (let i = 0; i < n; i++) dot += vectors[i]![k]! * vectors[i]![l]!;
        expect(Math.abs(dot - (k === l ? 1 : 0))).toBeLessThan(1e-13);
      }
    }
  });

  it('gives minEigenvalue and isPsd consistent with the spectrum', () => {
    const bad = [
      [1, 0.9, -0.9],
      [0.9, 1, 0.9],
      [-0.9, 0.9, 1],
    ];
    expect(minEigenvalue(bad)).toBeLessThan(0);
    expect(isPsd(bad)).toBe(false);
    expect(
      isPsd([
        [1, 1],
        [1, 1],
      ]),
    ).toBe(true); // singular but PSD
    expect(
      minEigenvalue([
        [1, 0.5],
        [0.5, 1],
      ]),
    ).toBeCloseTo(0.5, 14); // 1 − ρ, common practice
  });
});

describe('cholesky', () => {
  it('reproduces the matrix: L·Lᵀ = M for a 4-driver correlation', () => {
    const m = [
      [1, 0.3, -0.2, 0.1],
      [0.3, 1, 0.25, -0.4],
      [-0.2, 0.25, 1, 0.15],
      [0.1, -0.4, 0.15, 1],
    ];
    const l = cholesky(m, 'correlation.matrix');
    for (let i = 0; i < 4; i++) for (let j = i + 1; j < 4; j++) expect(l[i]![j]).toBe(0);
    expectMatrix('LLt', multiplyLowerTranspose(l), m, 1e-15);
  });

  it('gives the textbook 2×2 factor [[1,0],[ρ,√(1−ρ²)]] (common practice)', () => {
    const l = cholesky(
      [
        [1, -0.6],
        [-0.6, 1],
      ],
      'c',
    );
    expectMatrix(
      '2x2',
      l,
      [
        [1, 0],
        [-0.6, 0.8],
      ],
      1e-15,
    );
  });

  it('accepts perfectly correlated drivers (PSD, singular) with a zero column', () => {
    const m = [
      [1, 1, 0.5],
      [1, 1, 0.5],
      [0.5, 0.5, 1],
    ];
    const l = cholesky(m, 'correlation.matrix');
    expect(l[1]![1]).toBe(0);
    expectMatrix('LLt singular', multiplyLowerTranspose(l), m, 1e-14);
    const anti = [
      [1, -1],
      [-1, 1],
    ];
    expectMatrix('LLt anti', multiplyLowerTranspose(cholesky(anti, 'c')), anti, 1e-15);
  });

  it('rejects a non-PSD matrix with E_NOT_PSD, the field, the most negative eigenvalue and the nearest matrix', () => {
    const bad = [
      [1, 0.9, -0.9],
      [0.9, 1, 0.9],
      [-0.9, 0.9, 1],
    ];
    try {
      cholesky(bad, 'correlation.matrix');
      expect.fail('should have thrown');
    } catch (e) {
      const err = e as EngineError;
      expect(err.code).toBe('E_NOT_PSD');
      const i = err.issues[0]!;
      expect(i.field).toBe('correlation.matrix');
      const v = i.value as { minEigenvalue: number; nearest: number[][] };
      expect(v.minEigenvalue).toBeCloseTo(minEigenvalue(bad), 12);
      expect(err.message).toContain(v.minEigenvalue.toPrecision(6));
      expect(isPsd(v.nearest)).toBe(true);
      expect(() => cholesky(v.nearest, 'nearest')).not.toThrow();
    }
  });

  it('rejects a non-symmetric or non-square matrix naming the entry', () => {
    expect(() =>
      cholesky(
        [
          [1, 0.2],
          [0.3, 1],
        ],
        'corr',
      ),
    ).toThrowError(/corr\[0\]\[1\] must equal corr\[1\]\[0\]/);
    expect(() => cholesky([[1, 0.2], [0.2]], 'corr')).toThrowError(/corr\[1\]/);
    expect(() =>
      cholesky(
        [
          [1, NaN],
          [NaN, 1],
        ],
        'corr',
      ),
    ).toThrowError(/corr\[0\]\[1\] must be a finite number/);
  });
});

describe('nearestCorrelation', () => {
  // Higham (2002), "Computing the nearest correlation matrix — a problem from finance", IMA J. Numer. Anal. 22,
  // section 4, example A = tridiag(−1, 2, −1) of order 4; nearest correlation matrix (W = I) printed to 4 decimals.
  // from memory
  it('reproduces the 4×4 example of Higham (2002) to 4 decimals', () => {
    const a = [
      [2, -1, 0, 0],
      [-1, 2, -1, 0],
      [0, -1, 2, -1],
      [0, 0, -1, 2],
    ];
    const expected = [
      [1, -0.8084, 0.1916, 0.1068],
      [-0.8084, 1, -0.6562, 0.1916],
      [0.1916, -0.6562, 1, -0.8084],
      [0.1068, 0.1916, -0.8084, 1],
    ];
    const r = nearestCorrelation(a, { tol: 1e-12 });
    expect(r.converged).toBe(true);
    expectMatrix('Higham 4x4', r.matrix, expected, 5e-5);
  });

  // The 3×3 matrix [[1,1,0],[1,1,1],[0,1,1]] and its nearest correlation matrix with off-diagonals 0.7607 and
  // 0.1573 (4 decimals): N. J. Higham's talks and the test sets of several open implementations. from memory
  it('reproduces the 3×3 example [[1,1,0],[1,1,1],[0,1,1]]', () => {
    const r = nearestCorrelation(
      [
        [1, 1, 0],
        [1, 1, 1],
        [0, 1, 1],
      ],
      { tol: 1e-12 },
    );
    expectMatrix(
      'Higham 3x3',
      r.matrix,
      [
        [1, 0.7607, 0.1573],
        [0.7607, 1, 0.7607],
        [0.1573, 0.7607, 1],
      ],
      5e-5,
    );
  });

  it('returns a PSD, unit-diagonal, symmetric matrix closer than eigenvalue clipping plus rescaling', () => {
    const a = [
      [1, 0.95, -0.7, 0.4, 0.2],
      [0.95, 1, 0.3, -0.8, 0.5],
      [-0.7, 0.3, 1, 0.6, -0.9],
      [0.4, -0.8, 0.6, 1, 0.1],
      [0.2, 0.5, -0.9, 0.1, 1],
    ];
    expect(isPsd(a)).toBe(false);
    const r = nearestCorrelation(a);
    expect(r.converged).toBe(true);
    expect(minEigenvalue(r.matrix)).toBeGreaterThanOrEqual(-1e-14);
    for (let i = 0; i < 5; i++) {
      expect(r.matrix[i]![i]).toBe(1);
      for (let j = 0; j < 5; j++) expect(r.matrix[i]![j]).toBe(r.matrix[j]![i]);
    }
    // Simple repair: clip eigenvalues, then rescale to unit diagonal.
    const c = clipToPsd(a);
    const simple = c.map((row, i) => row.map((v, j) => v / Math.sqrt(c[i]![i]! * c[j]![j]!)));
    expect(frob(r.matrix, a)).toBeLessThan(frob(simple, a));
    expect(r.distance).toBeCloseTo(frob(r.matrix, a), 12);
  });

  it('leaves a valid correlation matrix unchanged', () => {
    const a = [
      [1, 0.2, 0.1],
      [0.2, 1, -0.3],
      [0.1, -0.3, 1],
    ];
    expectMatrix('unchanged', nearestCorrelation(a).matrix, a, 1e-12);
  });

  it('keeps heavily weighted rows closer to the input (W-norm, Higham 2002 §3)', () => {
    const a = [
      [1, 0.9, -0.9],
      [0.9, 1, 0.9],
      [-0.9, 0.9, 1],
    ];
    const plain = nearestCorrelation(a).matrix;
    const weighted = nearestCorrelation(a, { weights: [10, 10, 1] }).matrix;
    expect(Math.abs(weighted[0]![1]! - 0.9)).toBeLessThan(Math.abs(plain[0]![1]! - 0.9));
    expect(isPsd(weighted)).toBe(true);
    expect(() => nearestCorrelation(a, { weights: [1, -1, 1] })).toThrowError(/weights/);
  });
});

describe('spdCholesky / spdSolve / spdInverse', () => {
  // Worked example of a 3 × 3 Cholesky factorisation with an integer factor: A = [[4, 12, −16], [12, 37, −43],
  // [−16, −43, 98]] = L Lᵀ with L = [[2, 0, 0], [6, 1, 0], [−8, 5, 3]] (the standard textbook illustration; from memory,
  // and checked here by multiplying back).
  const A = [
    [4, 12, -16],
    [12, 37, -43],
    [-16, -43, 98],
  ];
  it('factors the worked example exactly and L·Lᵀ gives the matrix back', () => {
    const L = spdCholesky(A)!;
    expect(L).toEqual([
      [2, 0, 0],
      [6, 1, 0],
      [-8, 5, 3],
    ]);
    expect(multiplyLowerTranspose(L)).toEqual(A);
  });

  it('solves A x = b and inverts A to 1e-12 (A·x and A·A⁻¹ checked against b and I)', () => {
    const L = spdCholesky(A)!;
    const b = [1, -2, 3];
    const x = spdSolve(L, b);
    A.forEach((row, i) => {
      const ax = row.reduce((s, v, j) => s + v * x[j]!, 0);
      expect(Math.abs(ax - b[i]!), `row ${i}: A·x = ${ax}, b = ${b[i]}`).toBeLessThan(1e-12);
    });
    const inv = spdInverse(A)!;
    A.forEach((row, i) =>
      inv.forEach((_, j) => {
        const e = row.reduce((s, v, k) => s + v * inv[k]![j]!, 0);
        expect(Math.abs(e - (i === j ? 1 : 0)), `(A·A⁻¹)[${i}][${j}] = ${e}`).toBeLessThan(1e-12);
      }),
    );
  });

  it('returns null for indefinite, singular and non-finite matrices instead of throwing', () => {
    expect(
      spdCholesky([
        [1, 2],
        [2, 1],
      ]),
    ).toBeNull();
    expect(
      spdCholesky([
        [1, 1],
        [1, 1],
      ]),
    ).toBeNull();
    expect(spdCholesky([[NaN]])).toBeNull();
    expect(
      spdInverse([
        [0, 0],
        [0, 1],
      ]),
    ).toBeNull();
  });
});
