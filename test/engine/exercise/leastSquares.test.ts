import { describe, it, expect } from 'vitest';
import { solveLeastSquares } from '../../../src/engine/exercise/leastSquares.ts';
import { EngineError } from '../../../src/engine/errors.ts';

function cols(xs: number[], degree: number): Float64Array[] {
  return Array.from({ length: degree + 1 }, (_, d) => Float64Array.from(xs, (x) => x ** d));
}

describe('solveLeastSquares', () => {
  it('recovers the exact coefficients of a polynomial sampled without noise', () => {
    // common practice: a consistent system has zero residual and its exact solution is the least-squares solution.
    const xs = Array.from({ length: 40 }, (_, i) => -1 + i / 20);
    const truth = [0.5, -2, 3, 0.25];
    const y = Float64Array.from(xs, (x) => truth.reduce((s, c, d) => s + c * x ** d, 0));
    const r = solveLeastSquares(cols(xs, 3), y);
    truth.forEach((c, d) =>
      expect(Math.abs(r.coefficients[d]! - c), `β${d}: expected ${c}, got ${r.coefficients[d]}`).toBeLessThan(
        1e-12,
      ),
    );
    expect(r.ridge).toBe(0);
    expect(r.rmsResidual).toBeLessThan(1e-13);
  });

  it('matches the normal-equation solution of a small well-conditioned problem', () => {
    // Worked here: y = [1, 2, 2, 4] on x = [0, 1, 2, 3], straight-line fit. Normal equations
    // [4 6; 6 14] β = [9; 18] give β = (0.9, 0.9) (Golub & Van Loan 2013, the normal equations of Sec. 5.3; section from memory).
    const r = solveLeastSquares(cols([0, 1, 2, 3], 1), Float64Array.from([1, 2, 2, 4]));
    expect(Math.abs(r.coefficients[0]! - 0.9)).toBeLessThan(1e-14);
    expect(Math.abs(r.coefficients[1]! - 0.9)).toBeLessThan(1e-14);
  });

  it('is insensitive to column scale: scaling a regressor by 1e8 scales its coefficient by 1e-8', () => {
    // common practice: least squares is equivariant under column scaling; column equilibration (Björck 1996, section from memory,
    // Sec. 2.8.1) must preserve it to rounding.
    const xs = Array.from({ length: 30 }, (_, i) => i / 29);
    const y = Float64Array.from(xs, (x) => Math.sin(3 * x));
    const a = solveLeastSquares(cols(xs, 2), y);
    const c = cols(xs, 2);
    c[2] = c[2]!.map((v) => v * 1e8);
    const b = solveLeastSquares(c, y);
    expect(Math.abs(b.coefficients[2]! * 1e8 - a.coefficients[2]!)).toBeLessThan(
      1e-9 * Math.abs(a.coefficients[2]!),
    );
  });

  it('uses the ridge guard on exactly collinear regressors and still fits the data', () => {
    // common practice: with two identical columns the minimum-norm-like ridge solution splits the weight equally.
    const xs = Array.from({ length: 25 }, (_, i) => i / 24);
    const x = Float64Array.from(xs);
    const one = new Float64Array(xs.length).fill(1);
    const y = Float64Array.from(xs, (v) => 1 + 2 * v);
    const r = solveLeastSquares([one, x, Float64Array.from(x)], y);
    expect(r.ridge).toBeGreaterThan(0);
    expect(Math.abs(r.coefficients[1]! - r.coefficients[2]!)).toBeLessThan(1e-6);
    expect(Math.abs(r.coefficients[1]! + r.coefficients[2]! - 2)).toBeLessThan(1e-6);
    expect(r.rmsResidual).toBeLessThan(1e-6);
  });

  it('solves an ill-conditioned degree-9 fit on [0,1] far better than normal equations could', () => {
    // Monomials on [0,1] of degree 9 have condition number ~1e13 (Golub & Van Loan 2013, Ch. 5, section from memory, on the
    // sensitivity of normal equations, which square the condition number and would lose every digit here).
    const xs = Array.from({ length: 60 }, (_, i) => i / 59);
    const truth = Array.from({ length: 10 }, (_, d) => 1 / (d + 1));
    const y = Float64Array.from(xs, (x) => truth.reduce((s, c, d) => s + c * x ** d, 0));
    const r = solveLeastSquares(cols(xs, 9), y);
    expect(r.rmsResidual).toBeLessThan(1e-12);
  });

  it('rejects mismatched shapes naming the column', () => {
    expect(() => solveLeastSquares([new Float64Array(3)], new Float64Array(4))).toThrow(EngineError);
    expect(() => solveLeastSquares([new Float64Array(3)], new Float64Array(4))).toThrow(/design\[0\]/);
  });
});
