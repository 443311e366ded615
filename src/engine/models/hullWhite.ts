/**
 * One-factor Hull–White (1990) short-rate model fitted to a discount curve, in the notation of D. Brigo,
 * F. Mercurio, 'Interest Rate Models – Theory and Practice', 2nd ed. (Springer 2006), Sec. 3.3:
 *   r(t) = x(t) + φ(t),  dx = −a x dt + σ(t) dW,  x(0) = 0,
 *   φ(t) = f^M(0,t) + ψ(t),  ψ(t) = ∫₀ᵗ σ(u)² e^{−a(t−u)} B(u,t) du   (= σ²/(2a²)(1 − e^{−at})² for constant σ, BM eq. 3.36),
 * so that P(0,T) is reproduced exactly. Bond prices (BM eq. 3.39, written for the state x):
 *   P(t,T | x) = P(0,T)/P(0,t) · exp(−B(t,T)(x + ψ(t)) − ½ B(t,T)² y(t)),  B(t,T) = (1 − e^{−a(T−t)})/a,
 *   y(t) = Var x(t) = ∫₀ᵗ σ(u)² e^{−2a(t−u)} du.
 * (For constant σ: −Bψ − ½B²y = −B σ²/(2a²)(1−e^{−at})² − σ²/(4a)(1−e^{−2at})B², which is BM (3.39) with r = x + φ.)
 * Zero-coupon bond options: BM eqs. (3.40)–(3.41), σ_p² = B(T,S)² y(T) (piecewise σ: the same with the integral).
 * Caplets and floorlets: BM Sec. 3.3.2 (a caplet is (1 + Kτ) puts on P(T₁,T₂) with strike 1/(1 + Kτ)).
 * Coupon-bond options and European swaptions: F. Jamshidian, 'An exact bond option formula', J. Finance 44(1), 1989,
 * as in BM Sec. 3.3.2, eqs. (3.44)–(3.45): find x* with Σ cᵢ P(T, Tᵢ | x*) = strike, then sum bond options with
 * strikes Xᵢ = P(T, Tᵢ | x*).
 * σ may be piecewise constant (`sigma` array with right ends `sigmaTimes`, flat after the last).
 * Equation numbers of BM other than (3.39)–(3.41) are from memory; every formula is checked by the tests (published
 * bond-option, caplet and swaption values, parity, and a quadrature over the Gaussian state).
 */
import { fail, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import type { DiscountCurve } from '../market/types.ts';
import { normCdf } from '../math/normal.ts';
import type { HullWhiteParams } from '../simulation/types.ts';
import { exp, expm1, log } from '../math/detMath.ts';

export type { HullWhiteParams } from '../simulation/types.ts';

/** One cash flow: time in years and amount (currency units per unit notional). */
export interface CashFlow {
  t: number;
  amount: number;
}

/** A fitted Hull–White model: plain functions of times in years. */
export interface HullWhiteModel {
  readonly a: number;
  readonly curve: DiscountCurve;
  /** B(t,T) = (1 − e^{−a(T−t)})/a (years). */
  B(t: number, T: number): number;
  /** Variance of x(t) (rate² · year): ∫₀ᵗ σ² e^{−2a(t−u)} du. */
  varX(t: number): number;
  /** ψ(t) = φ(t) − f^M(0,t), the convexity part of the shift (rate). */
  psi(t: number): number;
  /** φ(t) = f^M(0,t) + ψ(t) (rate), so that r = x + φ. */
  phi(t: number): number;
  /** P(t,T | x(t) = x). */
  bond(t: number, T: number, x: number): number;
  /** Lognormal vol of P(T,S)/P(0,…) at T: σ_p = B(T,S)√y(T). */
  bondOptionVol(T: number, S: number): number;
  /** Option expiring at T on a zero-coupon bond maturing at S > T, strike X per unit face, value at 0 (BM 3.40–3.41). */
  zeroBondOption(p: { type: 'call' | 'put'; T: number; S: number; strike: number }): number;
  /** Caplet/floorlet paying notional·τ·(L(T₁,T₂) − K)^+ at T₂, τ = accrual. */
  caplet(p: {
    type: 'cap' | 'floor';
    T1: number;
    T2: number;
    strike: number;
    accrual?: number;
    notional?: number;
  }): number;
  /** European option at `expiry` on a bond paying `cashflows` (all after expiry), cash strike (Jamshidian 1989). */
  couponBondOption(p: {
    type: 'call' | 'put';
    expiry: number;
    cashflows: CashFlow[];
    strike: number;
  }): number;
  /**
   * European swaption on a swap starting at `expiry`, fixed rate `strike`, fixed payments at `payTimes` (accruals
   * from the previous date, or `accruals`). Payer = right to pay fixed = put on the coupon bond with strike 1.
   */
  swaption(p: {
    type: 'payer' | 'receiver';
    expiry: number;
    payTimes: number[];
    strike: number;
    accruals?: number[];
    notional?: number;
  }): number;
}

function checkParams(params: HullWhiteParams): { times: number[]; sig: number[] } {
  requirePositive('hullWhite.a', params.a, 'mean reversion per year, e.g. 0.05; must be > 0');
  if (typeof params.sigma === 'number') {
    requireNonNegative('hullWhite.sigma', params.sigma, 'absolute short-rate vol, e.g. 0.01 = 100 bp');
    return { times: [], sig: [params.sigma] };
  }
  const sig = params.sigma;
  const times = params.sigmaTimes ?? [];
  if (!Array.isArray(sig) || sig.length === 0)
    fail('E_MISSING', 'hullWhite.sigma', 'must be a number or a non-empty array', sig);
  if (times.length !== sig.length)
    fail(
      'E_LENGTH',
      'hullWhite.sigmaTimes',
      `must have the same length as sigma (${sig.length})`,
      times.length,
    );
  sig.forEach((s, i) => requireNonNegative(`hullWhite.sigma[${i}]`, s));
  times.forEach((t, i) => {
    requirePositive(`hullWhite.sigmaTimes[${i}]`, t);
    if (i > 0 && !(t > times[i - 1]!))
      fail('E_NOT_INCREASING', `hullWhite.sigmaTimes[${i}]`, 'must be increasing', t);
  });
  // Pieces (times[i−1], times[i]] with sig[i]; flat sig[last] after the last time.
  return { times: times.slice(0, -1), sig: sig.slice() };
}

/**
 * Builds the Hull–White model on a curve. `params.sigma` may be piecewise constant (`sigmaTimes` right ends).
 * Throws EngineError naming the field for a ≤ 0, negative σ or bad σ times.
 */
export function makeHullWhite(curve: DiscountCurve, params: HullWhiteParams): HullWhiteModel {
  const { times, sig } = checkParams(params);
  const a = params.a;
  // Breakpoints: σ = sig[i] on (edge[i], edge[i+1]], edge[0] = 0, last piece to ∞.
  const edges = [0, ...times];
  /** ∫_0^t σ(u)² g(t − u) du summed over the pieces, g given by its antiderivative parts. */
  function pieces(t: number, f: (s2: number, lo: number, hi: number) => number): number {
    let acc = 0;
    for (let i = 0; i < sig.length; i++) {
      const lo = edges[i]!;
      if (lo >= t) break;
      const hi = i + 1 < edges.length ? Math.min(edges[i + 1]!, t) : t;
      if (hi > lo) acc += f(sig[i]! * sig[i]!, lo, hi);
    }
    return acc;
  }
  // B(t,T) = (1 − e^{−a(T−t)})/a, BM eq. (3.39): the simulation layer's hwB, inlined here because every bond, caplet
  // and swaption price calls it several times inside the calibration's residual loop (a > 0 is checked above).
  const B = (t: number, T: number): number => -expm1(-a * (T - t)) / a;
  // ∫_lo^hi e^{−2a(t−u)} du = (e^{−2a(t−hi)} − e^{−2a(t−lo)})/(2a)
  const varX = (t: number): number =>
    pieces(t, (s2, lo, hi) => (s2 * (exp(-2 * a * (t - hi)) - exp(-2 * a * (t - lo)))) / (2 * a));
  // ψ(t) = ∫ σ² e^{−a(t−u)}(1 − e^{−a(t−u)})/a du
  const psi = (t: number): number =>
    pieces(t, (s2, lo, hi) => {
      const e1 = (exp(-a * (t - hi)) - exp(-a * (t - lo))) / a;
      const e2 = (exp(-2 * a * (t - hi)) - exp(-2 * a * (t - lo))) / (2 * a);
      return (s2 * (e1 - e2)) / a;
    });
  const checkT = (field: string, t: number): void => {
    requireFinite(field, t);
    if (t < 0) fail('E_NEGATIVE_TIME', field, 'must be >= 0 years', t);
  };
  const bond = (t: number, T: number, x: number): number => {
    checkT('bond.t', t);
    checkT('bond.T', T);
    if (T < t) fail('E_TIME_ORDER', 'bond.T', `must be >= t (${t})`, T);
    const b = B(t, T);
    return (curve.df(T) / curve.df(t)) * exp(-b * (x + psi(t)) - 0.5 * b * b * varX(t));
  };
  const bondOptionVol = (T: number, S: number): number => B(T, S) * Math.sqrt(varX(T));

  /** BM (3.40)–(3.41) with P(0,·) from the curve. */
  function zbo(type: 'call' | 'put', T: number, S: number, X: number): number {
    const PT = curve.df(T);
    const PS = curve.df(S);
    const sp = bondOptionVol(T, S);
    if (sp === 0) return type === 'call' ? Math.max(PS - X * PT, 0) : Math.max(X * PT - PS, 0);
    const h = log(PS / (PT * X)) / sp + 0.5 * sp;
    return type === 'call'
      ? PS * normCdf(h) - X * PT * normCdf(h - sp)
      : X * PT * normCdf(-h + sp) - PS * normCdf(-h);
  }

  const model: HullWhiteModel = {
    a,
    curve,
    B,
    varX,
    psi,
    phi: (t) => curve.instFwd(t) + psi(t),
    bond,
    bondOptionVol,
    zeroBondOption({ type, T, S, strike }) {
      if (type !== 'call' && type !== 'put')
        fail('E_OPTION_TYPE', 'zbo.type', "must be 'call' or 'put'", type);
      requirePositive('zbo.T', T, 'option expiry in years > 0');
      requirePositive('zbo.S', S);
      if (!(S > T)) fail('E_TIME_ORDER', 'zbo.S', `bond maturity must be after the option expiry ${T}`, S);
      requirePositive('zbo.strike', strike, 'strike per unit face, e.g. 0.68');
      return zbo(type, T, S, strike);
    },
    caplet({ type, T1, T2, strike, accrual, notional }) {
      if (type !== 'cap' && type !== 'floor')
        fail('E_OPTION_TYPE', 'caplet.type', "must be 'cap' or 'floor'", type);
      requirePositive('caplet.T1', T1, 'fixing time in years > 0');
      if (!(T2 > T1)) fail('E_TIME_ORDER', 'caplet.T2', `must be after T1 = ${T1}`, T2);
      requireFinite('caplet.strike', strike);
      const tau = accrual ?? T2 - T1;
      requirePositive('caplet.accrual', tau);
      const N = notional ?? 1;
      requireFinite('caplet.notional', N);
      const k = 1 + strike * tau;
      if (!(k > 0)) fail('E_STRIKE', 'caplet.strike', 'must keep 1 + K·τ > 0', strike);
      // Caplet = (1 + Kτ) ZBP(0, T1, T2, 1/(1 + Kτ)); floorlet with ZBC (BM Sec. 3.3.2).
      return N * k * zbo(type === 'cap' ? 'put' : 'call', T1, T2, 1 / k);
    },
    couponBondOption({ type, expiry, cashflows, strike }) {
      if (type !== 'call' && type !== 'put')
        fail('E_OPTION_TYPE', 'bondOption.type', "must be 'call' or 'put'", type);
      requirePositive('bondOption.expiry', expiry);
      requirePositive('bondOption.strike', strike);
      if (!Array.isArray(cashflows) || cashflows.length === 0)
        fail('E_EMPTY', 'bondOption.cashflows', 'must list at least one cash flow after expiry', cashflows);
      cashflows.forEach((c, i) => {
        requireNonNegative(`bondOption.cashflows[${i}].amount`, c.amount);
        if (!(c.t > expiry))
          fail('E_TIME_ORDER', `bondOption.cashflows[${i}].t`, `must be after expiry ${expiry}`, c.t);
      });
      const value = (x: number): number => cashflows.reduce((s, c) => s + c.amount * bond(expiry, c.t, x), 0);
      const slope = (x: number): number =>
        cashflows.reduce((s, c) => s - c.amount * B(expiry, c.t) * bond(expiry, c.t, x), 0);
      const xStar = solveDecreasing(value, slope, strike);
      // Jamshidian (1989): option on the bond = Σ cᵢ · option on P(T, Tᵢ) with strike P(T, Tᵢ | x*).
      return cashflows.reduce((s, c) => s + c.amount * zbo(type, expiry, c.t, bond(expiry, c.t, xStar)), 0);
    },
    swaption({ type, expiry, payTimes, strike, accruals, notional }) {
      if (type !== 'payer' && type !== 'receiver')
        fail('E_OPTION_TYPE', 'swaption.type', "must be 'payer' or 'receiver'", type);
      requirePositive('swaption.expiry', expiry);
      if (!Array.isArray(payTimes) || payTimes.length === 0)
        fail('E_EMPTY', 'swaption.payTimes', 'must list the fixed payment times', payTimes);
      requireFinite('swaption.strike', strike);
      const N = notional ?? 1;
      const cfs: CashFlow[] = payTimes.map((t, i) => {
        const prev = i === 0 ? expiry : payTimes[i - 1]!;
        if (!(t > prev)) fail('E_TIME_ORDER', `swaption.payTimes[${i}]`, `must be after ${prev}`, t);
        const tau = accruals ? accruals[i]! : t - prev;
        requirePositive(`swaption.accruals[${i}]`, tau);
        return { t, amount: strike * tau + (i === payTimes.length - 1 ? 1 : 0) };
      });
      // Payer swaption = put on the coupon bond with strike 1 (BM Sec. 3.3.2, eq. 3.45).
      return (
        N *
        model.couponBondOption({ type: type === 'payer' ? 'put' : 'call', expiry, cashflows: cfs, strike: 1 })
      );
    },
  };
  return model;
}

/** Newton with bisection safeguard for a decreasing f(x) = target; brackets by doubling. */
function solveDecreasing(f: (x: number) => number, df: (x: number) => number, target: number): number {
  let lo = -0.05;
  let hi = 0.05;
  let k = 0;
  while (f(lo) < target && k++ < 60) lo *= 2;
  k = 0;
  while (f(hi) > target && k++ < 60) hi *= 2;
  if (!(f(lo) >= target && f(hi) <= target))
    fail(
      'E_ROOT_NOT_BRACKETED',
      'bondOption.strike',
      'is not reached by the bond value for any short rate',
      target,
    );
  let x = 0.5 * (lo + hi);
  for (let it = 0; it < 100; it++) {
    const g = f(x) - target;
    if (g > 0) lo = x;
    else hi = x;
    let next = x - g / df(x);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) < 1e-15) return next;
    x = next;
  }
  return x;
}
