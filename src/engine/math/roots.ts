/**
 * Root finding by Brent's method: R. P. Brent, "Algorithms for Minimization without Derivatives"
 * (Prentice-Hall 1973), chapter 4, procedure `zero` (inverse quadratic interpolation, secant and bisection, with the
 * tolerance 2·eps·|b| + tol/2).
 */
import { EngineError, issue } from '../errors.ts';

/** Options of {@link brent}. */
export interface BrentOptions {
  /** Absolute tolerance on the root (default 1e-12). */
  tol?: number;
  /** Largest number of iterations (default 200). */
  maxIter?: number;
  /** Name of the quantity solved for, used in error messages (default `root`). */
  field?: string;
}

const EPS = 2.220446049250313e-16;

/**
 * A root of f in [a, b], where f(a) and f(b) have opposite signs (or one is zero).
 * Throws EngineError `E_ROOT_NOT_BRACKETED` naming the interval and both values, or `E_ROOT_NO_CONVERGENCE`.
 */
export function brent(f: (x: number) => number, a: number, b: number, options: BrentOptions = {}): number {
  const tol = options.tol ?? 1e-12;
  const maxIter = options.maxIter ?? 200;
  const field = options.field ?? 'root';
  let fa = f(a);
  let fb = f(b);
  if (!Number.isFinite(fa) || !Number.isFinite(fb) || fa * fb > 0) {
    const value = { a, b, fa, fb };
    const rule = `must be bracketed: f(a) and f(b) need opposite signs on [${a}, ${b}]`;
    const hint = `f(${a}) = ${fa}, f(${b}) = ${fb}; widen the search interval or check the inputs`;
    const i = issue('E_ROOT_NOT_BRACKETED', field, rule, value, hint);
    throw new EngineError('E_ROOT_NOT_BRACKETED', i.message, [i]);
  }
  if (fa === 0) return a;
  if (fb === 0) return b;
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < maxIter; iter++) {
    if (fb * fc > 0) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol1 = 2 * EPS * Math.abs(b) + 0.5 * tol;
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol1 || fb === 0) return b;
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      // Interpolation: secant if a = c, inverse quadratic otherwise (Brent 1973, ch. 4).
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol1 * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol1 ? d : m > 0 ? tol1 : -tol1;
    fb = f(b);
    if (!Number.isFinite(fb)) {
      const i = issue('E_ROOT_NOT_FINITE', field, 'must have a finite function value inside the bracket', b);
      throw new EngineError('E_ROOT_NOT_FINITE', i.message, [i]);
    }
  }
  const i = issue(
    'E_ROOT_NO_CONVERGENCE',
    field,
    `must converge within ${maxIter} iterations`,
    { lastEstimate: b, f: fb },
    'raise maxIter or loosen tol',
  );
  throw new EngineError('E_ROOT_NO_CONVERGENCE', i.message, [i]);
}
