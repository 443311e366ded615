/**
 * Deterministic quantities of the Hull–White one-factor model in the shifted form r(t) = x(t) + φ(t),
 * dx = −a x dt + σ(t) dW, x(0) = 0 (Brigo & Mercurio, "Interest Rate Models – Theory and Practice", 2nd ed. 2006,
 * Sec. 3.3 and the one-factor case of Sec. 4.2), with σ piecewise constant.
 *
 * With B(τ) = (1 − e^{−aτ})/a and V(t,T) = Var(∫_t^T x(u) du | F_t) = ∫_t^T σ(u)² B(T − u)² du:
 * - bonds: P(t,T) = P(0,T)/P(0,t) · exp(½[V(t,T) − V(0,T) + V(0,t)] − B(T − t) x(t))  (Brigo & Mercurio (4.14)
 *   with one factor; valid for any deterministic σ(·));
 * - the integrated shift: ∫_0^T φ(u) du = −ln P(0,T) + ½ V(0,T), so that E[exp(−∫_0^T r)] = P(0,T) exactly;
 * - φ(t) = f(0,t) + ½ ∂_t V(0,t), with ∂_t V(0,t) = ∫_0^t σ(u)² 2 B(t − u) e^{−a(t − u)} du.
 */
import type { HullWhiteParams } from './types.ts';
import { fail, requireNonNegative, requirePositive } from '../errors.ts';
import { expm1, pow } from '../math/detMath.ts';

// 8-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun 1964, Table 25.4). Kept as tabulated
// rather than math/quadrature's gaussLegendre(8): the computed rule differs in the last bit of some entries, and the
// Hull–White terms feed every simulated path, so switching would change seeded results and saved studies' hashes.
const GL_X = [
  -0.9602898564975363, -0.7966664774136267, -0.525532409916329, -0.1834346424956498, 0.1834346424956498,
  0.525532409916329, 0.7966664774136267, 0.9602898564975363,
];
const GL_W = [
  0.1012285362903763, 0.2223810344533745, 0.3137066458778873, 0.362683783378362, 0.362683783378362,
  0.3137066458778873, 0.2223810344533745, 0.1012285362903763,
];

/** B(τ) = (1 − e^{−aτ})/a, τ in years (limit τ as a → 0). */
export function hwB(a: number, tau: number): number {
  return a * tau === 0 ? tau : -expm1(-a * tau) / a;
}

function gauss(f: (s: number) => number, tau: number): number {
  let s = 0;
  for (let i = 0; i < 8; i++) s += GL_W[i]! * f(0.5 * tau * (GL_X[i]! + 1));
  return 0.5 * tau * s;
}

/**
 * ∫_0^τ B(s) ds and ∫_0^τ B(s)² ds. Closed forms (τ − B)/a and (τ − 2B(τ) + (1 − e^{−2aτ})/(2a))/a² lose digits
 * for small aτ; there the integrands are smooth and 8-point Gauss–Legendre is exact to rounding.
 */
export function hwIntegrals(a: number, tau: number): { intB: number; intB2: number } {
  if (Math.abs(a * tau) < 0.1) {
    return { intB: gauss((s) => hwB(a, s), tau), intB2: gauss((s) => pow(hwB(a, s), 2), tau) };
  }
  const b = hwB(a, tau);
  const b2 = hwB(2 * a, tau);
  return { intB: (tau - b) / a, intB2: (tau - 2 * b + b2) / (a * a) };
}

/** Piecewise-constant σ as (right end, value) pieces, flat after the last. */
interface SigmaPieces {
  ends: number[];
  values: number[];
}

/** The deterministic functions of one Hull–White model. Times in years. */
export interface HullWhiteTerms {
  readonly a: number;
  /** σ on the piece containing (t, t + ε). */
  sigmaAt(t: number): number;
  /** Right ends of the σ pieces (to be put on the simulation grid). */
  readonly breakTimes: readonly number[];
  /** V(t,T) = Var(∫_t^T x du | F_t). */
  V(t: number, T: number): number;
  /** ∂_t V(0,t). */
  dV0(t: number): number;
}

/** Validates the parameters (naming `field`) and builds the terms. */
export function makeHullWhiteTerms(params: HullWhiteParams, field = 'hw'): HullWhiteTerms {
  const a = requireNonNegative(`${field}.a`, params.a, 'mean reversion in 1/year, e.g. 0.05');
  let pieces: SigmaPieces;
  if (Array.isArray(params.sigma)) {
    const ends = params.sigmaTimes ?? [];
    if (ends.length !== params.sigma.length)
      fail(
        'E_SIGMA_TIMES',
        `${field}.sigmaTimes`,
        `must have one right end per sigma value (${params.sigma.length})`,
        ends,
      );
    params.sigma.forEach((s, i) => requirePositive(`${field}.sigma[${i}]`, s));
    ends.forEach((t, i) => {
      requirePositive(`${field}.sigmaTimes[${i}]`, t);
      if (i > 0 && !(t > ends[i - 1]!))
        fail('E_NOT_INCREASING', `${field}.sigmaTimes[${i}]`, 'must increase', t);
    });
    pieces = { ends: [...ends], values: [...params.sigma] };
  } else {
    requirePositive(`${field}.sigma`, params.sigma, 'absolute short-rate vol, e.g. 0.01');
    pieces = { ends: [], values: [params.sigma] };
  }
  const n = pieces.values.length;
  // Piece i covers (start_i, end_i]; the last piece extends to +∞.
  const start = (i: number) => (i === 0 ? 0 : pieces.ends[i - 1]!);
  const end = (i: number) => (i >= n - 1 ? Infinity : pieces.ends[i]!);
  const G = (tau: number) => (tau <= 0 ? 0 : hwIntegrals(a, tau).intB2);
  const sigmaAt = (t: number): number => {
    for (let i = 0; i < n; i++) if (t < end(i) - 1e-12) return pieces.values[i]!;
    return pieces.values[n - 1]!;
  };
  const V = (t: number, T: number): number => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const u0 = Math.max(t, start(i));
      const u1 = Math.min(T, end(i));
      if (u1 <= u0) continue;
      // ∫_{u0}^{u1} B(T − u)² du = G(T − u0) − G(T − u1).
      s += pieces.values[i]! * pieces.values[i]! * (G(T - u0) - G(T - u1));
    }
    return s;
  };
  const dV0 = (t: number): number => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const u0 = start(i);
      const u1 = Math.min(t, end(i));
      if (u1 <= u0) continue;
      // ∫_{u0}^{u1} 2 B(t − u) e^{−a(t − u)} du = B(t − u0)² − B(t − u1)², since d/dτ B² = 2 B e^{−aτ}.
      s += pieces.values[i]! * pieces.values[i]! * (pow(hwB(a, t - u0), 2) - pow(hwB(a, t - u1), 2));
    }
    return s;
  };
  return { a, sigmaAt, breakTimes: pieces.ends, V, dV0 };
}

/**
 * Covariance of (ΔW, ε_x, ε_I) over a step of length h with constant σ, where ΔW = W(t+h) − W(t),
 * ε_x = x(t+h) − e^{−ah} x(t) and ε_I = ∫_t^{t+h} x du − B(h) x(t) (Glasserman, "Monte Carlo Methods in Financial
 * Engineering", 2003, Sec. 3.3.1, the joint simulation of the Vasicek rate and its integral, extended by ΔW):
 *   Var ΔW = h, Cov(ΔW, ε_x) = σ B(h), Cov(ΔW, ε_I) = σ ∫_0^h B,
 *   Var ε_x = σ² (1 − e^{−2ah})/(2a), Cov(ε_x, ε_I) = σ² B(h)²/2, Var ε_I = σ² ∫_0^h B².
 * Returned as the lower Cholesky factor [l00, l10, l11, l20, l21, l22] (rounding negatives to 0).
 */
export function hwStepFactor(a: number, sigma: number, h: number): Float64Array {
  const b = hwB(a, h);
  const { intB, intB2 } = hwIntegrals(a, h);
  const vW = h;
  const cWx = sigma * b;
  const cWI = sigma * intB;
  const vx = sigma * sigma * hwB(2 * a, h);
  const cxI = (sigma * sigma * b * b) / 2;
  const vI = sigma * sigma * intB2;
  const l00 = Math.sqrt(vW);
  const l10 = cWx / l00;
  const l11 = Math.sqrt(Math.max(0, vx - l10 * l10));
  const l20 = cWI / l00;
  const l21 = l11 > 1e-300 ? (cxI - l20 * l10) / l11 : 0;
  const l22 = Math.sqrt(Math.max(0, vI - l20 * l20 - l21 * l21));
  return Float64Array.from([l00, l10, l11, l20, l21, l22]);
}
