import { describe, it, expect } from 'vitest';
import {
  gaussLegendre,
  integrateAdaptive,
  integrateAdaptiveReport,
  integrateGL,
  integrateToInfinity,
  integrateWholeLine,
} from '../../../src/engine/math/quadrature.ts';
import { EngineError } from '../../../src/engine/errors.ts';

function near(label: string, computed: number, expected: number, tol: number): void {
  const err = Math.abs(computed - expected);
  if (!(err <= tol))
    throw new Error(`${label}: expected ${expected}, computed ${computed}, |err| ${err} > tol ${tol}`);
  expect(err).toBeLessThanOrEqual(tol);
}

describe('gaussLegendre', () => {
  // Abramowitz & Stegun (1964), Table 25.4, n = 5: nodes ±0.906179845938664, ±0.538469310105683, 0; weights
  // 0.236926885056189, 0.478628670499366, 0.568888888888889 (15 decimals). from memory
  it('reproduces the 5-point handbook nodes and weights', () => {
    const { nodes, weights } = gaussLegendre(5);
    const xs = [-0.906179845938664, -0.538469310105683, 0, 0.538469310105683, 0.906179845938664];
    const ws = [
      0.236926885056189, 0.478628670499366, 0.568888888888889, 0.478628670499366, 0.236926885056189,
    ];
    for (let i = 0; i < 5; i++) {
      near(`node ${i}`, nodes[i]!, xs[i]!, 1e-15);
      near(`weight ${i}`, weights[i]!, ws[i]!, 1e-15);
    }
  });

  it('integrates polynomials of degree ≤ 2n − 1 exactly and its weights sum to 2', () => {
    for (const n of [1, 2, 3, 8, 20, 64]) {
      const { weights } = gaussLegendre(n);
      near(
        `sum w n=${n}`,
        weights.reduce((s, w) => s + w, 0),
        2,
        1e-13,
      );
      for (let k = 0; k <= 2 * n - 1 && k <= 40; k++) {
        const exact = k % 2 === 1 ? 0 : 2 / (k + 1); // ∫_{-1}^{1} x^k dx, common practice
        near(
          `n=${n} x^${k}`,
          integrateGL((x) => x ** k, -1, 1, n),
          exact,
          2e-14,
        );
      }
    }
  });

  it('stays accurate for large n: n = 400 weights sum to 2 and ∫_{-1}^{1} cos(20x) dx = sin(20)/10', () => {
    const { nodes, weights } = gaussLegendre(400);
    near(
      'sum w n=400',
      weights.reduce((s, w) => s + w, 0),
      2,
      1e-12,
    );
    for (let i = 1; i < 400; i++) expect(nodes[i]!).toBeGreaterThan(nodes[i - 1]!);
    near(
      'cos(20x)',
      integrateGL((x) => Math.cos(20 * x), -1, 1, 400),
      Math.sin(20) / 10,
      1e-13,
    );
    // Second method: the adaptive Gauss–Kronrod result for the same integral.
    near(
      'GL vs GK',
      integrateGL((x) => Math.cos(20 * x), -1, 1, 60),
      integrateAdaptive((x) => Math.cos(20 * x), -1, 1),
      1e-13,
    );
  });

  it('returns copies, so a caller cannot change another caller’s rule', () => {
    const a = gaussLegendre(7);
    a.nodes[0] = 42;
    expect(gaussLegendre(7).nodes[0]).not.toBe(42);
  });

  it('rejects a bad order with a message naming n', () => {
    expect(() => gaussLegendre(0)).toThrowError(/n must be an integer/);
    expect(() => gaussLegendre(2.5)).toThrowError(EngineError);
  });

  it('maps to [a, b]: ∫_0^1 e^x dx = e − 1 and ∫_0^π sin = 2', () => {
    near('exp', integrateGL(Math.exp, 0, 1, 12), Math.E - 1, 1e-15);
    near('sin', integrateGL(Math.sin, 0, Math.PI, 20), 2, 1e-14);
  });
});

describe('integrateAdaptive', () => {
  it('integrates degree-22 polynomials exactly with a single Kronrod 15 panel (degree 3·7 + 1)', () => {
    // A Kronrod extension of the 7-point Gauss rule is exact to degree 3n + 1 = 22 (Piessens et al. 1983, QUADPACK §2.2).
    near('x^22', integrateAdaptiveReport((x) => x ** 22, -1, 1, { maxDepth: 0 }).value, 2 / 23, 1e-15);
    near('x^20', integrateAdaptiveReport((x) => x ** 20, -1, 1, { maxDepth: 0 }).value, 2 / 21, 1e-15);
  });

  it('handles an end-point singularity: ∫_0^1 x^{-1/2} dx = 2 and ∫_0^1 √x dx = 2/3', () => {
    near(
      '1/sqrt',
      integrateAdaptive((x) => 1 / Math.sqrt(x), 0, 1, { absTol: 1e-8, relTol: 1e-8, maxDepth: 80 }),
      2,
      1e-8,
    );
    near('sqrt', integrateAdaptive(Math.sqrt, 0, 1), 2 / 3, 1e-10);
  });

  it('handles a sharp peak: ∫_{-1}^{1} 1/(1e-4 + x²) dx = 2·atan(100)/0.01', () => {
    near(
      'peak',
      integrateAdaptive((x) => 1 / (1e-4 + x * x), -1, 1, { relTol: 1e-12 }),
      200 * Math.atan(100),
      1e-9,
    );
  });

  it('returns 0 on an empty interval and flips sign with reversed limits', () => {
    expect(integrateAdaptive(Math.exp, 1, 1)).toBe(0);
    near('reversed', integrateAdaptive(Math.exp, 1, 0), 1 - Math.E, 1e-14);
  });

  it('throws E_QUADRATURE_NOT_CONVERGED when the budget is too small', () => {
    try {
      integrateAdaptive((x) => Math.sin(1 / x), 1e-6, 1, { maxSegments: 4 });
      expect.fail('should have thrown');
    } catch (e) {
      expect((e as EngineError).code).toBe('E_QUADRATURE_NOT_CONVERGED');
    }
  });
});

describe('semi-infinite integration', () => {
  it('∫_0^∞ e^{-x²} dx = √π/2 and ∫_{-∞}^{∞} e^{-x²/2} dx = √(2π) (Gaussian integral, common practice)', () => {
    near(
      'half gaussian',
      integrateToInfinity((x) => Math.exp(-x * x), 0),
      Math.sqrt(Math.PI) / 2,
      1e-13,
    );
    near(
      'whole gaussian',
      integrateWholeLine((x) => Math.exp(-0.5 * x * x)),
      Math.sqrt(2 * Math.PI),
      1e-12,
    );
  });

  it('∫_1^∞ x^{-2} dx = 1 and ∫_0^∞ 1/(1 + x²) dx = π/2', () => {
    near(
      'x^-2',
      integrateToInfinity((x) => 1 / (x * x), 1),
      1,
      1e-12,
    );
    near(
      'cauchy',
      integrateToInfinity((x) => 1 / (1 + x * x), 0),
      Math.PI / 2,
      1e-12,
    );
  });
});
