import { describe, it, expect } from 'vitest';
import { brent } from '../../../src/engine/math/roots.ts';
import { EngineError } from '../../../src/engine/errors.ts';

describe('brent', () => {
  it('finds √2, π (sin) and the Dottie number (cos x = x) to the tolerance', () => {
    expect(Math.abs(brent((x) => x * x - 2, 0, 2) - Math.SQRT2)).toBeLessThan(1e-12);
    expect(Math.abs(brent(Math.sin, 3, 4, { tol: 1e-15 }) - Math.PI)).toBeLessThan(1e-15);
    // Dottie number 0.739085133215160641655... (fixed point of cos; common practice, digits from memory)
    expect(Math.abs(brent((x) => Math.cos(x) - x, 0, 1) - 0.7390851332151607)).toBeLessThan(1e-12);
  });

  it('converges on a function that is flat near the root (x³) and on a step-like one', () => {
    const r = brent((x) => x ** 3, -1, 2, { tol: 1e-14 });
    expect(Math.abs(r)).toBeLessThan(1e-4); // |r|³ below the representable f-tolerance
    const s = brent((x) => Math.tanh(200 * (x - 0.3)), 0, 1);
    expect(Math.abs(s - 0.3)).toBeLessThan(1e-12);
  });

  it('takes few evaluations on a smooth function (superlinear, Brent 1973 ch. 4)', () => {
    let calls = 0;
    brent(
      (x) => {
        calls++;
        return Math.exp(x) - 5;
      },
      0,
      10,
    );
    expect(calls).toBeLessThan(20);
  });

  it('returns an end point that is itself a root', () => {
    expect(brent((x) => x - 1, 1, 3)).toBe(1);
  });

  it('throws E_ROOT_NOT_BRACKETED naming the interval and both function values', () => {
    try {
      brent((x) => x * x + 1, -1, 2, { field: 'impliedVol' });
      expect.fail('should have thrown');
    } catch (e) {
      const err = e as EngineError;
      expect(err.code).toBe('E_ROOT_NOT_BRACKETED');
      expect(err.issues[0]!.field).toBe('impliedVol');
      expect(err.message).toContain('[-1, 2]');
      expect(err.message).toContain('f(-1) = 2');
      expect(err.message).toContain('f(2) = 5');
    }
  });

  it('throws E_ROOT_NO_CONVERGENCE when maxIter is too small', () => {
    expect(() => brent((x) => x * x - 2, 0, 2, { maxIter: 2 })).toThrowError(
      /must converge within 2 iterations/,
    );
  });
});
