import { describe, expect, it } from 'vitest';
import { fitFromStarts, fitLeastSquares } from '../../../src/engine/calibration/levenbergMarquardt.ts';

// NIST Statistical Reference Datasets, nonlinear regression, "Misra1a" (Misra 1978, lower difficulty):
// y = b1 (1 − exp(−b2 x)); data and certified values from https://www.itl.nist.gov/div898/strd/nls/data/misra1a.shtml
// (certified b1 = 2.3894212918E+02 ± 2.7070075241E+00, b2 = 5.5015643181E-04 ± 7.2668688436E-06,
// residual standard deviation 1.0187876330E-01; starts 1: (500, 1e-4), 2: (250, 5e-4)).
const MISRA_X = [
  77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0,
];
const MISRA_Y = [
  10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.4, 75.47, 81.78,
];
const misra = (b1: number, b2: number) => MISRA_X.map((x, i) => b1 * (1 - Math.exp(-b2 * x)) - MISRA_Y[i]!);

describe('Levenberg–Marquardt wrapper', () => {
  for (const [start, b1, b2] of [
    ['NIST start 1', 500, 1e-4],
    ['NIST start 2', 250, 5e-4],
  ] as const) {
    it(`reproduces the NIST Misra1a certified estimates and standard errors from ${start}`, () => {
      const r = fitLeastSquares({
        parameters: [
          { name: 'b1', initial: b1 },
          { name: 'b2', initial: b2 },
        ],
        residuals: (p) => misra(p.b1!, p.b2!),
      });
      const info = JSON.stringify({ start, params: r.parameters, se: r.standardErrors, stop: r.stopReason });
      expect(r.converged, info).toBe(true);
      // NIST certifies 11 digits; tolerance 1e-7 relative on estimates, 1e-4 on the standard errors
      // (forward-difference Jacobian).
      expect(Math.abs(r.parameters.b1! / 2.3894212918e2 - 1), info).toBeLessThan(1e-7);
      expect(Math.abs(r.parameters.b2! / 5.5015643181e-4 - 1), info).toBeLessThan(1e-7);
      expect(Math.abs(r.standardErrors.b1! / 2.7070075241 - 1), info).toBeLessThan(1e-4);
      expect(Math.abs(r.standardErrors.b2! / 7.2668688436e-6 - 1), info).toBeLessThan(1e-4);
      const rsd = Math.sqrt(r.residuals.reduce((s, x) => s + x * x, 0) / (14 - 2));
      expect(Math.abs(rsd / 1.018787633e-1 - 1), info).toBeLessThan(1e-7);
      expect(r.conditionNumber).toBeGreaterThan(1);
    });
  }

  it('uses an analytic Jacobian when the instruments give one, to the same certified Misra1a estimates', () => {
    // NIST Misra1a as above; ∂r/∂b1 = 1 − e^{−b2 x}, ∂r/∂b2 = b1 x e^{−b2 x}.
    const fd = fitLeastSquares({
      parameters: [
        { name: 'b1', initial: 500 },
        { name: 'b2', initial: 1e-4 },
      ],
      residuals: (p) => misra(p.b1!, p.b2!),
    });
    const an = fitLeastSquares({
      parameters: [
        { name: 'b1', initial: 500 },
        { name: 'b2', initial: 1e-4 },
      ],
      residuals: (p) => misra(p.b1!, p.b2!),
      jacobian: (p) => MISRA_X.map((x) => [1 - Math.exp(-p.b2! * x), p.b1! * x * Math.exp(-p.b2! * x)]),
    });
    expect(an.converged).toBe(true);
    expect(Math.abs(an.parameters.b1! / 2.3894212918e2 - 1)).toBeLessThan(1e-7);
    expect(Math.abs(an.parameters.b2! / 5.5015643181e-4 - 1)).toBeLessThan(1e-7);
    expect(an.evaluations).toBeLessThan(fd.evaluations);
  });

  it('finds the Rosenbrock minimum (1, 1) written as least squares r = (10(y − x²), 1 − x)', () => {
    // H.H. Rosenbrock, "An automatic method for finding the greatest or least value of a function", Computer J. 3,
    // 1960; least-squares form as in Madsen, Nielsen & Tingleff (2004), Example 3.13 (start (−1.2, 1)).
    const r = fitLeastSquares({
      parameters: [
        { name: 'x', initial: -1.2 },
        { name: 'y', initial: 1 },
      ],
      residuals: (p) => [10 * (p.y! - p.x! ** 2), 1 - p.x!],
    });
    expect(r.converged).toBe(true);
    expect(Math.abs(r.parameters.x! - 1)).toBeLessThan(1e-8);
    expect(Math.abs(r.parameters.y! - 1)).toBeLessThan(1e-8);
  });

  it('keeps parameters inside their bounds and stops at the bound when the optimum lies outside', () => {
    // Unconstrained optimum of Σ(b − 3)² is 3 (common practice); with b ≤ 2 the best feasible point is the bound.
    const r = fitLeastSquares({
      parameters: [{ name: 'b', initial: 1, lower: 0, upper: 2 }],
      residuals: (p) => [p.b! - 3, 2 * (p.b! - 3)],
    });
    expect(r.parameters.b!).toBeLessThanOrEqual(2);
    expect(2 - r.parameters.b!).toBeLessThan(1e-3);
  });

  it('holds fixed parameters and reports named constraints without imposing them', () => {
    const r = fitLeastSquares({
      parameters: [
        { name: 'b1', initial: 240 },
        { name: 'b2', initial: 5.5e-4, fixed: true },
      ],
      residuals: (p) => misra(p.b1!, p.b2!),
      constraints: [{ name: 'b1 ≤ 100', mode: 'report', g: (p) => 100 - p.b1! }],
    });
    expect(r.parameters.b2).toBe(5.5e-4);
    expect(r.standardErrors.b2).toBeUndefined();
    expect(r.constraints[0]).toMatchObject({ name: 'b1 ≤ 100', satisfied: false, mode: 'report' });
  });

  it('flags a fit stopped by the evaluation budget as not converged, with a warning', () => {
    const r = fitLeastSquares(
      {
        parameters: [
          { name: 'b1', initial: 500 },
          { name: 'b2', initial: 1e-4 },
        ],
        residuals: (p) => misra(p.b1!, p.b2!),
      },
      { maxEvaluations: 4 },
    );
    expect(r.converged).toBe(false);
    expect(r.stopReason).toBe('max-evaluations');
    expect(r.warnings.map((w) => w.code)).toContain('W_FIT_NOT_CONVERGED');
  });

  it('reports non-finite residuals at the start instead of returning a fit', () => {
    const r = fitLeastSquares({
      parameters: [{ name: 'b', initial: -1 }],
      residuals: (p) => [Math.sqrt(p.b!)],
    });
    expect(r.converged).toBe(false);
    expect(r.stopReason).toBe('non-finite');
  });
});

describe('Broyden updates and the multi-start rule', () => {
  const misraJac = (p: Readonly<Record<string, number>>) =>
    MISRA_X.map((x) => [1 - Math.exp(-p.b2! * x), p.b1! * x * Math.exp(-p.b2! * x)]);

  for (const [start, b1, b2] of [
    ['NIST start 1', 500, 1e-4],
    ['NIST start 2', 250, 5e-4],
  ] as const)
    it(`with Broyden updates reaches the certified Misra1a estimates and standard errors from ${start}`, () => {
      // NIST StRD Misra1a as above (certified values in the header comment).
      let jacobianCalls = 0;
      const r = fitLeastSquares(
        {
          parameters: [
            { name: 'b1', initial: b1 },
            { name: 'b2', initial: b2 },
          ],
          residuals: (p) => misra(p.b1!, p.b2!),
          jacobian: (p) => {
            jacobianCalls++;
            return misraJac(p);
          },
        },
        { jacobianUpdate: 'broyden' },
      );
      const info = JSON.stringify({
        params: r.parameters,
        se: r.standardErrors,
        stop: r.stopReason,
        jacobianCalls,
      });
      expect(r.converged, info).toBe(true);
      expect(Math.abs(r.parameters.b1! / 2.3894212918e2 - 1), info).toBeLessThan(1e-7);
      expect(Math.abs(r.parameters.b2! / 5.5015643181e-4 - 1), info).toBeLessThan(1e-7);
      // Standard errors from the analytic Jacobian at the solution: 1e-6 relative.
      expect(Math.abs(r.standardErrors.b1! / 2.7070075241 - 1), info).toBeLessThan(1e-6);
      expect(Math.abs(r.standardErrors.b2! / 7.2668688436e-6 - 1), info).toBeLessThan(1e-6);
      // Fewer full Jacobians than iterations: the secant updates stood in for some.
      expect(r.jacobians, info).toBeLessThan(r.iterations + 1);
      expect(r.jacobians + 1, info).toBe(jacobianCalls);
    });

  it('with Broyden updates finds the Rosenbrock minimum (1, 1) from (−1.2, 1)', () => {
    // Rosenbrock (1960) in the least-squares form of Madsen, Nielsen & Tingleff (2004), Example 3.13.
    const r = fitLeastSquares(
      {
        parameters: [
          { name: 'x', initial: -1.2 },
          { name: 'y', initial: 1 },
        ],
        residuals: (p) => [10 * (p.y! - p.x! * p.x!), 1 - p.x!],
        jacobian: (p) => [
          [-20 * p.x!, 10],
          [-1, 0],
        ],
      },
      { jacobianUpdate: 'broyden' },
    );
    const info = JSON.stringify(r.parameters);
    expect(r.converged, info).toBe(true);
    expect(Math.abs(r.parameters.x! - 1), info).toBeLessThan(1e-8);
    expect(Math.abs(r.parameters.y! - 1), info).toBeLessThan(1e-8);
  });

  /**
   * A constructed least-squares problem with two minima: r(x) = (x² − 1, ½(x − 1)), cost (x² − 1)² + ¼(x − 1)², global
   * minimum 0 at x = 1 and a local one near x = −0.85 (cost ≈ 0.93, RMSE ≈ 0.68): calculus, constructed here.
   */
  const twoMinima = (x0: number) =>
    fitLeastSquares({
      parameters: [{ name: 'x', initial: x0 }],
      residuals: (p) => [p.x! * p.x! - 1, 0.5 * (p.x! - 1)],
    });

  it('keeps searching after a start caught in a poorer local minimum (constructed two-minimum case)', () => {
    const m = fitFromStarts([-2, 2, 3], twoMinima, 0.01);
    const info = JSON.stringify(
      m.runs.map((r) => ({ start: r.start, x: r.fit.parameters.x, rmse: r.fit.rmse })),
    );
    expect(m.runs[0]!.fit.parameters.x!, info).toBeLessThan(0);
    expect(m.runs[0]!.fit.rmse, info).toBeGreaterThan(0.5);
    // The second start reaches the global minimum within the good-fit level and the third is skipped.
    expect(m.runs.length, info).toBe(2);
    expect(Math.abs(m.runs[1]!.fit.parameters.x! - 1), info).toBeLessThan(1e-8);
    expect(m.skipped).toEqual([3]);
  });

  it('stops after a first start at the global minimum, and runs every start at goodRmse 0', () => {
    const early = fitFromStarts([2, -2], twoMinima, 0.01);
    expect(early.runs.length).toBe(1);
    expect(early.skipped).toEqual([-2]);
    expect(Math.abs(early.runs[0]!.fit.parameters.x! - 1)).toBeLessThan(1e-8);
    const all = fitFromStarts([2, -2], twoMinima, 0);
    expect(all.runs.length).toBe(2);
    expect(all.skipped).toEqual([]);
  });
});
