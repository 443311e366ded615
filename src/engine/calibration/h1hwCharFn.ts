/**
 * Characteristic function of the H1-HW model: Heston under Hull–White rates with corr(S, r) = ρ_Sr and
 * corr(v, r) = 0, made affine by replacing √v(t) in the equity–rate covariance term by its expectation
 * (L.A. Grzelak, C.W. Oosterlee, "On the Heston model with stochastic interest rates", SIAM J. Financial Math. 2,
 * 2011, Sec. 2.2, the H1-HW model and its forward characteristic function; Sec. 2.2 also gives E[√v(t)] exactly
 * through the noncentral χ² law of v(t), which is what is used here instead of their fitted a + b e^{−ct}, so it
 * stays valid for v0 < θ).
 *
 * Derivation used (T-forward measure, F = S/P(t,T), b(t) = σ_r(t) B(t,T) the bond-price vol):
 *   dF/F = √v dW_S + b dW_r,  d ln F = −½(v + 2ρ_Sr b √v + b²) dt + √v dW_S + b dW_r.
 * With √v → E[√v(t)] the v-part is exactly Heston's (same Riccati C) and the rest is Gaussian, so
 *   ln φ_H1(u) = ln φ_Heston(u) − ½(u² + iu) Σ²(T),  Σ²(T) = ∫_0^T [b(t)² + 2ρ_Sr b(t) E√v(t)] dt,
 * which is the A(u,τ) term of Grzelak & Oosterlee's H1-HW ChF with ρ_{v,r} = 0.
 */
import type { HestonParams, HullWhiteParams } from '../simulation/types.ts';
import type { LogCharFn, LogCharFnGrid } from './cosPricer.ts';
import { hestonLogChf } from './hestonCharFn.ts';
import { hwB, hwSigmaAt, integratePieces } from './hullWhiteBondVol.ts';
import { exp, log, pow, sin } from '../math/detMath.ts';
import { hestonCumulants } from '../models/hestonCos.ts';
import { hestonExponentGrid } from '../models/hestonCharFn.ts';

/** ln Γ(x) for x > 0 by the Lanczos approximation (g = 7, n = 9; C. Lanczos, SIAM J. Numer. Anal. B1, 1964). */
export function logGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return log(Math.PI / Math.abs(sin(Math.PI * x))) - logGamma(1 - x);
  const z = x - 1;
  let a = c[0]!;
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (z + i);
  return 0.5 * log(2 * Math.PI) + (z + 0.5) * log(t) - t + log(a);
}

/**
 * E[√v(t)] for the CIR variance of Heston: v(t) = c̄·χ′²(δ, λ̄) with c̄ = σ²(1 − e^{−κt})/(4κ), δ = 4κθ/σ²,
 * λ̄ = 4κ v0 e^{−κt}/(σ²(1 − e^{−κt})) (Cox, Ingersoll & Ross 1985), so
 * E√v = √(2c̄) Σ_k e^{−λ̄/2}(λ̄/2)^k/k! · Γ(k + (δ+1)/2)/Γ(k + δ/2) (Poisson mixture of central χ²).
 * For λ̄ > 2·10⁴ (t → 0) the delta method √m − Var/(8 m^{3/2}) is used (common practice).
 */
export function expectedSqrtVariance(p: HestonParams, t: number): number {
  const { v0, kappa, theta, sigma } = p;
  if (t <= 0) return Math.sqrt(v0);
  const e = exp(-kappa * t);
  const cbar = (sigma * sigma * (1 - e)) / (4 * kappa);
  const delta = (4 * kappa * theta) / (sigma * sigma);
  const lam = (4 * kappa * v0 * e) / (sigma * sigma * (1 - e));
  if (!(lam <= 2e4)) {
    const m = v0 * e + theta * (1 - e);
    const v =
      (v0 * sigma * sigma * e * (1 - e)) / kappa +
      (theta * sigma * sigma * ((1 - e) * (1 - e))) / (2 * kappa);
    return Math.sqrt(m) - v / (8 * pow(m, 1.5));
  }
  const half = 0.5 * lam;
  const a = 0.5 * (delta + 1);
  const b = 0.5 * delta;
  let logTerm = -half + logGamma(a) - logGamma(b);
  let sum = exp(logTerm);
  const kMin = half + 10 * Math.sqrt(half) + 20;
  const logHalf = half > 0 ? log(half) : -Infinity;
  for (let k = 1; k < 200000; k++) {
    logTerm += logHalf - log(k) + log(k - 1 + a) - log(k - 1 + b);
    const term = exp(logTerm);
    sum += term;
    if (k > kMin && term < 1e-17 * sum) break;
    if (half === 0) break;
  }
  return Math.sqrt(2 * cbar) * sum;
}

/** Rate inputs of the H1-HW characteristic function. */
export interface H1HwRates {
  hw: HullWhiteParams;
  /** Correlation between the equity and the domestic short rate. */
  rhoSR: number;
  /** E[√v(t)] as a function (e.g. {@link sqrtVarianceTable}); default the exact series at each node. */
  sqrtV?: (t: number) => number;
}

/**
 * E[√v(t)] on [0, tMax] tabulated at 65 nodes uniform in √t and interpolated linearly (the function is smooth; the
 * √t spacing follows its fast change near 0). Lets every expiry of a calibration share one set of series sums.
 */
export function sqrtVarianceTable(p: HestonParams, tMax: number): (t: number) => number {
  const n = 64;
  const s = Array.from({ length: n + 1 }, (_, i) => (i / n) * Math.sqrt(tMax));
  const vals = s.map((x) => expectedSqrtVariance(p, x * x));
  return (t: number) => {
    const x = Math.sqrt(Math.max(t, 0));
    const h = Math.sqrt(tMax) / n;
    const i = Math.min(Math.floor(x / h), n - 1);
    const w = (x - s[i]!) / h;
    return (1 - w) * vals[i]! + w * vals[i + 1]!;
  };
}

/** Σ²(T) = ∫_0^T [b(t)² + 2ρ_Sr b(t) E√v(t)] dt, b(t) = σ_r(t)(1 − e^{−a(T−t)})/a. */
export function h1hwExtraVariance(p: HestonParams, T: number, rates: H1HwRates): number {
  const { hw, rhoSR } = rates;
  return integratePieces(hw, 0, T, (t) => {
    const b = hwSigmaAt(hw, t) * hwB(hw.a, t, T);
    return (
      b * b + 2 * rhoSR * b * (rhoSR === 0 ? 0 : rates.sqrtV ? rates.sqrtV(t) : expectedSqrtVariance(p, t))
    );
  });
}

/** ln φ of ln(S_T/F(0,T)) under the T-forward measure in the H1-HW model. */
export function h1hwLogChf(p: HestonParams, expiry: number, rates: H1HwRates): LogCharFn {
  const heston = hestonLogChf(p, expiry);
  const extra = h1hwExtraVariance(p, expiry, rates);
  return (u, out) => {
    heston(u, out);
    out[0] = out[0]! - 0.5 * u * u * extra;
    out[1] = out[1]! - 0.5 * u * extra;
  };
}

/**
 * Cumulants c₁, c₂, c₄ of ln(S_T/F(0,T)) under H1-HW: those of Heston (models layer, {@link hestonCumulants}) plus
 * the Gaussian part of ln φ_H1 = ln φ_Heston − ½(u² + iu)Σ²(T), which adds −½Σ² to c₁, Σ² to c₂ and nothing to c₄.
 */
export function h1hwCumulants(
  p: HestonParams,
  T: number,
  rates: H1HwRates,
): { c1: number; c2: number; c4: number } {
  const h = hestonCumulants(p, T);
  const extra = h1hwExtraVariance(p, T, rates);
  return { c1: h.c1 - 0.5 * extra, c2: h.c2 + extra, c4: h.c4 };
}

/** {@link h1hwLogChf} on a grid of real u (the Heston part by the models layer's inlined grid). */
export function h1hwLogChfGrid(p: HestonParams, expiry: number, rates: H1HwRates): LogCharFnGrid {
  const extra = h1hwExtraVariance(p, expiry, rates);
  return (u, re, im) => {
    hestonExponentGrid(p, expiry, u, re, im);
    for (let j = 0; j < u.length; j++) {
      const x = u[j]!;
      re[j] = re[j]! - 0.5 * x * x * extra;
      im[j] = im[j]! - 0.5 * x * extra;
    }
  };
}
