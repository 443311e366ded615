import { describe, it, expect } from 'vitest';
import {
  normCdf,
  normCdfBoth,
  normCdfUpper,
  normInv,
  normInvFast,
  normInvFastInPlace,
  normPdf,
} from '../../../src/engine/math/normal.ts';
import { integrateAdaptive } from '../../../src/engine/math/quadrature.ts';

const EPS = 2.220446049250313e-16;

function relErr(a: number, b: number): number {
  return b === 0 ? Math.abs(a) : Math.abs(a / b - 1);
}

function expectRel(label: string, computed: number, expected: number, tol: number): void {
  const err = relErr(computed, expected);
  if (!(err <= tol))
    throw new Error(`${label}: expected ${expected}, computed ${computed}, rel err ${err} > tol ${tol}`);
  expect(err).toBeLessThanOrEqual(tol);
}

/**
 * Round trip Φ(inv(p)) = p over p = 10^k for k = −300 (0.01) −1, then p = 0.001 (0.001) 0.999, then 1 − 10^k for
 * k = −16 .. −1, judged on the small tail (p near 1 by 1 − p). Throws at the first p whose relative error exceeds
 * tol(x); returns the worst error / tolerance ratio.
 */
function worstRoundTrip(inv: (p: number) => number, tol: (x: number) => number): number {
  const ps: number[] = [];
  for (let k = -300; k <= -1; k += 0.01) ps.push(10 ** k);
  for (let i = 1; i < 1000; i++) ps.push(i / 1000);
  for (let k = -16; k <= -1; k++) ps.push(1 - 10 ** k);
  let worstScaled = 0;
  for (const p of ps) {
    const x = inv(p);
    const t = tol(x);
    const err = p < 0.5 ? relErr(normCdf(x), p) : relErr(normCdfUpper(x), 1 - p);
    if (!(err <= t)) throw new Error(`p=${p}: x=${x}, rel err ${err} > tol ${t}`);
    worstScaled = Math.max(worstScaled, err / t);
  }
  return worstScaled;
}

describe('normCdf', () => {
  // Abramowitz & Stegun (1964), Handbook of Mathematical Functions, Table 26.1 (P(x), 15 decimals). from memory
  const table: [number, number][] = [
    [0.5, 0.691462461274013],
    [1.0, 0.841344746068543],
    [1.5, 0.933192798731142],
    [2.0, 0.977249868051821],
    [2.5, 0.993790334674224],
    [3.0, 0.99865010196837],
  ];
  it('matches the 15-decimal handbook table to 1e-15 absolute', () => {
    for (const [x, p] of table) {
      const c = normCdf(x);
      if (!(Math.abs(c - p) <= 1e-15)) throw new Error(`x=${x}: expected ${p}, computed ${c}, tol 1e-15`);
      expect(Math.abs(c - p)).toBeLessThanOrEqual(1e-15);
    }
  });

  // Far tails: Φ(−10) = 7.619853024160527e-24 and Φ(−37) = 5.725571222524e-300 (from memory; values as
  // printed by general-purpose statistics libraries, e.g. the R function pnorm). Cross-checked below against a
  // second method (Laplace continued fraction), so the memory values are not the only evidence.
  it('keeps full relative accuracy in the far lower tail', () => {
    expectRel('Phi(-10)', normCdf(-10), 7.619853024160527e-24, 8 * EPS);
    expectRel('Phi(-37)', normCdf(-37), 5.725571222524e-300, 1e-12);
  });

  // Second method: Laplace's continued fraction for the Mills ratio, Q(x) = φ(x) / (x + 1/(x + 2/(x + 3/(x + ...)))),
  // Abramowitz & Stegun (1964) eq. 26.2.14; converges fast for x ≥ 3.
  function millsTail(x: number): number {
    let f = x;
    for (let k = 200; k >= 1; k--) f = x + k / f;
    // f now = x + 1/(x + 2/(x + ...)) evaluated bottom-up
    return normPdf(x) / f;
  }
  it('agrees with the continued-fraction tail to 1e-14 relative for x in [3, 38]', () => {
    let worst = 0;
    for (let x = 3; x <= 38; x += 0.25) {
      const cf = millsTail(x);
      worst = Math.max(worst, relErr(normCdf(-x), cf), relErr(normCdfUpper(x), cf));
    }
    // grid x = 3 (0.25) 38: worst relative difference found about 1e-15
    expect(worst).toBeLessThan(1e-14);
  });

  // Second method in the project: Φ(x) = 1/2 + ∫_0^x φ(t) dt by adaptive Gauss–Kronrod.
  it('agrees with the integral of the density to 2e-15 absolute on [−6, 6]', () => {
    let worst = 0;
    for (let x = -6; x <= 6; x += 0.3) {
      const q = 0.5 + integrateAdaptive(normPdf, 0, x, { absTol: 1e-15, relTol: 1e-14 });
      worst = Math.max(worst, Math.abs(q - normCdf(x)));
    }
    // grid x = −6 (0.3) 6
    expect(worst).toBeLessThan(2e-15);
    expect(normCdfBoth(1.3)).toEqual({ lower: normCdf(1.3), upper: normCdfUpper(1.3) });
  });

  it('is symmetric: Φ(x) + Φ(−x) = 1 and upper(x) = Φ(−x) exactly', () => {
    for (let x = -8; x <= 8; x += 0.37) {
      expect(Math.abs(normCdf(x) + normCdf(-x) - 1)).toBeLessThanOrEqual(2 * EPS);
      expect(normCdfUpper(x)).toBe(normCdf(-x));
    }
  });

  it('has the limits 0, 1/2, 1 and propagates NaN', () => {
    expect(normCdf(0)).toBe(0.5);
    expect(normCdf(-Infinity)).toBe(0);
    expect(normCdf(Infinity)).toBe(1);
    expect(normCdf(-40)).toBeGreaterThanOrEqual(0);
    expect(Number.isNaN(normCdf(NaN))).toBe(true);
  });

  it('has density φ(0) = 1/√(2π) and φ(x) = φ(−x); dΦ/dx ≈ φ', () => {
    expectRel('phi(0)', normPdf(0), 1 / Math.sqrt(2 * Math.PI), EPS); // common practice
    for (let x = -5; x <= 5; x += 0.5) {
      expect(normPdf(x)).toBe(normPdf(-x));
      const h = 1e-5;
      const d = (normCdf(x + h) - normCdf(x - h)) / (2 * h);
      expect(Math.abs(d - normPdf(x))).toBeLessThan(1e-9);
    }
  });
});

describe('normInv', () => {
  // Quantiles of the trade: Φ⁻¹(0.975) = 1.959963984540054, Φ⁻¹(0.995) = 2.575829303548901 (common practice;
  // digits from memory, and checked below by the round trip).
  it('gives the usual two-sided 95% and 99% quantiles', () => {
    expectRel('z(0.975)', normInv(0.975), 1.959963984540054, 4 * EPS);
    expectRel('z(0.995)', normInv(0.995), 2.575829303548901, 4 * EPS);
    expect(normInv(0.5)).toBe(0);
  });

  // Round trip grid: p = 10^k for k = −300 (0.01) −1, then p = 0.001 (0.001) 0.999, then 1 − 10^k for k = −16 .. −1.
  // A relative error ε in x moves Φ(x) by about x²ε relatively, so the tolerance is (4 + 2x²)·eps.
  // Worst found: 1.3e-13 relative at p ≈ 1.5e-299 (x ≈ −37, where x²·eps ≈ 3e-13); 9.6e-16 on the central grid.
  it('inverts Φ over p = 1e-300 ... 1 − 1e-16 within (4 + 2x²) ulp', () => {
    expect(worstRoundTrip(normInv, (x) => (4 + 2 * x * x) * EPS)).toBeLessThanOrEqual(1);
  });

  it('is antisymmetric: normInv(1 − p) = −normInv(p) where 1 − p is exact', () => {
    // p = 2^-k: 1 − p is exactly representable, so both sides see the same probability.
    for (let k = 2; k <= 50; k++) {
      const p = 2 ** -k;
      const a = normInv(p);
      const b = normInv(1 - p);
      expect(Math.abs(a + b)).toBeLessThanOrEqual(Math.abs(a) * 4 * EPS);
    }
  });

  it('returns ±∞ at 0 and 1 and NaN outside [0, 1]', () => {
    expect(normInv(0)).toBe(-Infinity);
    expect(normInv(1)).toBe(Infinity);
    expect(Number.isNaN(normInv(-0.1))).toBe(true);
    expect(Number.isNaN(normInv(1.1))).toBe(true);
    expect(Number.isNaN(normInv(NaN))).toBe(true);
    expect(Number.isFinite(normInv(5e-324))).toBe(true);
  });
});

describe('normInvFast', () => {
  // Same round-trip grid as normInv. Without the Halley step the documented accuracy is about 1e-16 relative in x
  // (Wichura 1988, AS 241, PPND16), i.e. a few ulp of Φ(x) scaled by x²: tolerance (4 + 4x²)·eps.
  // Worst found: 3.1·(1 + x²) ulp at p ≈ 2.3e-174.
  it('inverts Φ over p = 1e-300 ... 1 − 1e-16 within (4 + 4x²) ulp', () => {
    expect(worstRoundTrip(normInvFast, (x) => (4 + 4 * x * x) * EPS)).toBeLessThanOrEqual(1);
  });

  it('is the starting point normInv refines: both agree to 1e-14 relative', () => {
    for (const p of [1e-200, 1e-12, 0.001, 0.3, 0.5, 0.7, 0.999, 1 - 1e-12]) {
      const a = normInvFast(p);
      const b = normInv(p);
      expect(Math.abs(a - b), `p=${p}: fast ${a}, refined ${b}`).toBeLessThanOrEqual(
        1e-14 * Math.max(1, Math.abs(b)),
      );
    }
    // Φ⁻¹(0.975) = 1.959963984540054 (common practice; digits from memory, as for normInv above).
    expectRel('z(0.975)', normInvFast(0.975), 1.959963984540054, 4 * EPS);
  });
});

describe('normInvFastInPlace', () => {
  it('gives normInvFast bit for bit, entry by entry, across both branches and their boundary', () => {
    // Both sides of the switch |p − ½| = 0.425, the far tails, and a dense random-looking sweep.
    const ps: number[] = [0.075, 0.925, 0.07499999999999999, 0.9250000000000002, 1e-300, 1 - 1e-16, 0.5];
    for (let i = 1; i < 5000; i++) ps.push((i * 0.6180339887498949) % 1 || 0.5);
    const a = Float64Array.from([0.123, ...ps, 0.456]);
    normInvFastInPlace(a, 1, 1 + ps.length);
    expect(a[0]).toBe(0.123); // entries outside [from, to) untouched
    expect(a[a.length - 1]).toBe(0.456);
    ps.forEach((p, i) => expect(Object.is(a[i + 1], normInvFast(p)), `p = ${p}`).toBe(true));
  });

  it('handles a call longer than any earlier one and an empty range', () => {
    const long = new Float64Array(20_000).map((_, i) => (i + 0.5) / 20_000);
    const want = Array.from(long, (p) => normInvFast(p));
    normInvFastInPlace(long, 0, long.length);
    expect(Array.from(long)).toEqual(want);
    const empty = Float64Array.of(0.3);
    normInvFastInPlace(empty, 1, 1);
    expect(empty[0]).toBe(0.3);
  });
});
