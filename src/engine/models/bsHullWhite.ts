/**
 * European equity options under Black–Scholes equity with Hull–White (Gaussian) short rates and equity–rate
 * correlation, in closed form. Under the T-forward measure the forward F(t) = S(t)e^{−q(T−t)}/P(t,T) is a lognormal
 * martingale with instantaneous vol vector σ_S(t) dW_S + σ_r(t) B(t,T) dW_r (the bond's vol is −σ_r B(t,T)), so
 *   Var ln F(T) = ∫₀ᵀ [σ_S(t)² + 2ρ σ_S(t) σ_r(t) B(t,T) + σ_r(t)² B(t,T)²] dt
 * and the call is P(0,T)·Black(F(0), K, √Var) with F(0) = S₀e^{−qT}/P(0,T).
 * Sources: Rabinovitch (1989), 'Pricing stock and bond options when the default-free rate is stochastic',
 * J. Financial and Quantitative Analysis 24(4); Brigo & Mercurio (2006), Ch. 13–14 on hybrid equity/rate
 * models (forward-measure change with Gaussian rates); B(t,T) = (1 − e^{−a(T−t)})/a (BM eq. 3.39).
 * The piecewise integrals of B and B² are done in closed form on each interval where both vols are constant.
 */
import { fail, requireCorrelation, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import type { DiscountCurve } from '../market/types.ts';
import type { HullWhiteParams } from '../simulation/types.ts';
import { blackUndiscounted, type OptionType } from './blackScholes.ts';
import { exp } from '../math/detMath.ts';

/** Inputs of a Black–Scholes–Hull–White European option. */
export interface BsHullWhiteInput {
  type: OptionType;
  /** Spot (currency units). */
  S: number;
  K: number;
  /** Years to expiry. */
  T: number;
  /** Continuous dividend yield. */
  q: number;
  /** Discount curve of the option's currency. */
  curve: DiscountCurve;
  /**
   * Equity vol: a number, or piecewise constant with `vols[i]` on (volTimes[i−1], volTimes[i]] and flat after the
   * last (the convention of the simulation contract).
   */
  vol: number | { volTimes: number[]; vols: number[] };
  /** Hull–White parameters of the short rate (σ constant or piecewise). */
  hw: HullWhiteParams;
  /** Correlation of the equity and short-rate Brownian motions. */
  rho: number;
}

/** Price and the total log-variance of the T-forward (year · vol²). */
export interface BsHullWhiteResult {
  price: number;
  /** ∫₀ᵀ total instantaneous variance of the forward. */
  variance: number;
  /** √(variance/T): the Black–Scholes vol that gives the same price on this curve. */
  effectiveVol: number;
  forward: number;
}

type Piecewise = { times: number[]; values: number[] };

function toPiecewise(field: string, v: number | { volTimes: number[]; vols: number[] }): Piecewise {
  if (typeof v === 'number') {
    requireNonNegative(field, v);
    return { times: [], values: [v] };
  }
  if (!v || !Array.isArray(v.vols) || v.vols.length === 0)
    fail('E_MISSING', `${field}.vols`, 'must be a non-empty array', v);
  if (!Array.isArray(v.volTimes) || v.volTimes.length !== v.vols.length)
    fail('E_LENGTH', `${field}.volTimes`, `must have the same length as vols (${v.vols.length})`, v.volTimes);
  v.vols.forEach((x, i) => requireNonNegative(`${field}.vols[${i}]`, x));
  v.volTimes.forEach((t, i) => {
    requirePositive(`${field}.volTimes[${i}]`, t);
    if (i > 0 && !(t > v.volTimes[i - 1]!))
      fail('E_NOT_INCREASING', `${field}.volTimes[${i}]`, 'must be increasing', t);
  });
  return { times: v.volTimes.slice(0, -1), values: v.vols.slice() };
}

function valueAt(p: Piecewise, t: number): number {
  // value on (times[i−1], times[i]] → index of first time ≥ t
  let i = 0;
  while (i < p.times.length && t > p.times[i]!) i++;
  return p.values[i]!;
}

/** Black–Scholes–Hull–White European price in closed form (see the file comment for the variance). */
export function bsHullWhite(p: BsHullWhiteInput): BsHullWhiteResult {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'bshw.type', "must be 'call' or 'put'", p.type);
  requirePositive('bshw.S', p.S);
  requirePositive('bshw.K', p.K);
  requirePositive('bshw.T', p.T, 'the option must expire after the valuation date');
  requireFinite('bshw.q', p.q);
  requireCorrelation('bshw.rho', p.rho);
  requirePositive('bshw.hw.a', p.hw.a, 'mean reversion per year > 0');
  const eq = toPiecewise('bshw.vol', p.vol);
  const hw =
    typeof p.hw.sigma === 'number'
      ? toPiecewise('bshw.hw.sigma', p.hw.sigma)
      : toPiecewise('bshw.hw', { volTimes: p.hw.sigmaTimes ?? [], vols: p.hw.sigma });
  const { T, rho } = p;
  const a = p.hw.a;
  const cuts = [...new Set([0, ...eq.times, ...hw.times, T].filter((t) => t >= 0 && t <= T))].sort(
    (x, y) => x - y,
  );
  // E1(t) = e^{−a(T−t)}; ∫ B dt = [(hi − lo) − (E1(hi) − E1(lo))/a]/a;
  // ∫ B² dt = [(hi − lo) − 2(E1(hi) − E1(lo))/a + (E2(hi) − E2(lo))/(2a)]/a², E2 = E1².
  let variance = 0;
  for (let i = 0; i + 1 < cuts.length; i++) {
    const lo = cuts[i]!;
    const hi = cuts[i + 1]!;
    if (!(hi > lo)) continue;
    const mid = 0.5 * (lo + hi);
    const sS = valueAt(eq, mid);
    const sR = valueAt(hw, mid);
    const e1 = exp(-a * (T - hi)) - exp(-a * (T - lo));
    const e2 = exp(-2 * a * (T - hi)) - exp(-2 * a * (T - lo));
    const intB = (hi - lo - e1 / a) / a;
    const intB2 = (hi - lo - (2 * e1) / a + e2 / (2 * a)) / (a * a);
    variance += sS * sS * (hi - lo) + 2 * rho * sS * sR * intB + sR * sR * intB2;
  }
  variance = Math.max(variance, 0);
  const P = p.curve.df(T);
  const forward = (p.S * exp(-p.q * T)) / P;
  const price = P * blackUndiscounted(p.type, forward, p.K, Math.sqrt(variance));
  return { price, variance, effectiveVol: Math.sqrt(variance / T), forward };
}
