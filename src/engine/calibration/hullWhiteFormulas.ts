/**
 * Hull–White one-factor closed forms used by calibration (D. Brigo, F. Mercurio, "Interest Rate Models — Theory and
 * Practice", 2nd ed., Springer 2006, Sec. 3.3.2: bond option eq. (3.40), caplet as a put on a zero bond eq. (3.41)).
 * θ(t) is implied by the curve, so every formula reads only P(0,·); σ may be piecewise constant.
 */
import type { HullWhiteParams } from '../simulation/types.ts';
import { normCdf } from './blackFormulas.ts';

/** B(t,T) = (1 − e^{−a(T−t)})/a (Brigo & Mercurio 2006, eq. 3.39); the a → 0 limit is T − t. */
export function hwB(a: number, t: number, T: number): number {
  const tau = T - t;
  return Math.abs(a) < 1e-8 ? tau : (1 - Math.exp(-a * tau)) / a;
}

/** σ(u) of piecewise-constant HW vol (flat after the last piece). */
export function hwSigmaAt(p: HullWhiteParams, u: number): number {
  if (typeof p.sigma === 'number') return p.sigma;
  const times = p.sigmaTimes ?? [];
  for (let i = 0; i < times.length; i++) if (u <= times[i]!) return p.sigma[i]!;
  return p.sigma[p.sigma.length - 1]!;
}

/** ∫_0^T σ(u)² e^{−2a(T−u)} du, exact for piecewise-constant σ: the variance of x(T). */
export function hwStateVariance(p: HullWhiteParams, T: number): number {
  const a = p.a;
  const kernel = (s: number, e: number) =>
    Math.abs(a) < 1e-8 ? e - s : (Math.exp(-2 * a * (T - e)) - Math.exp(-2 * a * (T - s))) / (2 * a);
  if (typeof p.sigma === 'number') return p.sigma * p.sigma * kernel(0, T);
  const times = p.sigmaTimes ?? [];
  let v = 0;
  let s = 0;
  for (let i = 0; i < p.sigma.length && s < T; i++) {
    const e = i < times.length - 1 ? Math.min(times[i]!, T) : T;
    if (e > s) v += p.sigma[i]! * p.sigma[i]! * kernel(s, e);
    s = e;
  }
  return v;
}

/**
 * Price at 0 of a put (or call) expiring at T on a zero bond maturing at S, strike X, notional 1:
 * ZBP = X P(0,T) N(−h + σ_p) − P(0,S) N(−h), h = ln(P(0,S)/(P(0,T) X))/σ_p + σ_p/2,
 * σ_p² = B(T,S)² ∫_0^T σ(u)² e^{−2a(T−u)} du (Brigo & Mercurio 2006, eq. 3.40).
 */
export function hwZeroBondOption(o: {
  hw: HullWhiteParams;
  dfT: number;
  dfS: number;
  T: number;
  S: number;
  strike: number;
  isCall: boolean;
}): number {
  const sp = hwB(o.hw.a, o.T, o.S) * Math.sqrt(hwStateVariance(o.hw, o.T));
  const X = o.strike;
  if (!(sp > 0)) return Math.max(o.isCall ? o.dfS - X * o.dfT : X * o.dfT - o.dfS, 0);
  const h = Math.log(o.dfS / (o.dfT * X)) / sp + 0.5 * sp;
  return o.isCall
    ? o.dfS * normCdf(h) - X * o.dfT * normCdf(h - sp)
    : X * o.dfT * normCdf(-h + sp) - o.dfS * normCdf(-h);
}

/**
 * Caplet on the simple rate over [T, T+τ] with strike K, notional 1, paid at T+τ:
 * Cpl = (1 + Kτ) ZBP(0, T, T+τ, 1/(1+Kτ)) (Brigo & Mercurio 2006, eq. 3.41).
 */
export function hwCaplet(o: {
  hw: HullWhiteParams;
  dfT: number;
  dfS: number;
  T: number;
  tau: number;
  strike: number;
}): number {
  const X = 1 / (1 + o.strike * o.tau);
  return (
    (1 + o.strike * o.tau) *
    hwZeroBondOption({ hw: o.hw, dfT: o.dfT, dfS: o.dfS, T: o.T, S: o.T + o.tau, strike: X, isCall: false })
  );
}
