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
import { exp, log, sin } from '../math/detMath.ts';
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

/** E[√v(t)] and its time derivative d/dt E[√v(t)] (per year). */
export interface SqrtVarianceAt {
  value: number;
  slope: number;
}

/**
 * E[√v(t)] for the CIR variance of Heston: v(t) = c̄·χ′²(δ, λ̄) with c̄ = σ²(1 − e^{−κt})/(4κ), δ = 4κθ/σ²,
 * λ̄ = 4κ v0 e^{−κt}/(σ²(1 − e^{−κt})) (Cox, Ingersoll & Ross 1985), so
 * E√v = √(2c̄) Σ_k e^{−λ̄/2}(λ̄/2)^k/k! · Γ(k + (δ+1)/2)/Γ(k + δ/2) (Poisson mixture of central χ²).
 * For λ̄ > 2·10⁴ (t → 0) the delta method √m − Var/(8 m^{3/2}) is used (common practice).
 */
export function expectedSqrtVariance(p: HestonParams, t: number): number {
  return expectedSqrtVarianceWithSlope(p, t).value;
}

/**
 * {@link expectedSqrtVariance} with its exact time derivative from the same series. With μ = λ̄/2, π_k the Poisson(μ)
 * weights and R_k = Γ(k + (δ+1)/2)/Γ(k + δ/2):
 *   E√v = √(2c̄)·Σ π_k R_k,  d/dt E√v = (√(2c̄))′·Σ π_k R_k + √(2c̄)·μ′·Σ π_k (R_{k+1} − R_k),
 * since dπ_k/dμ = π_{k−1} − π_k; R_{k+1} − R_k = R_k·½/(k + δ/2), c̄′ = σ²e^{−κt}/4 and
 * μ′ = −2κ²v0 e^{−κt}/(σ²(1 − e^{−κt})²) (the series above differentiated term by term). The sum runs outward from
 * the Poisson mode with the term ratios μ/(k+1)·(k + (δ+1)/2)/(k + δ/2) (no logarithm per term), about 20√μ + 40
 * multiplications. In the delta-method range the derivative of that formula is used.
 */
export function expectedSqrtVarianceWithSlope(p: HestonParams, t: number): SqrtVarianceAt {
  const { v0, kappa, theta, sigma } = p;
  const s2 = sigma * sigma;
  if (t <= 0) {
    // Itô at t = 0: d E√v/dt = κ(θ − v0)/(2√v0) − σ²/(8√v0) (generator of the CIR process applied to √v).
    const r = Math.sqrt(v0);
    return { value: r, slope: (kappa * (theta - v0)) / (2 * r) - s2 / (8 * r) };
  }
  const e = exp(-kappa * t);
  const ome = 1 - e;
  const cbar = (s2 * ome) / (4 * kappa);
  const delta = (4 * kappa * theta) / s2;
  const lam = (4 * kappa * v0 * e) / (s2 * ome);
  if (!(lam <= 2e4)) {
    // Delta method f = √m − V/(8 m^{3/2}) with m = E v(t), V = Var v(t) (CIR moments, Cox, Ingersoll & Ross 1985).
    const m = v0 * e + theta * ome;
    const dm = kappa * e * (theta - v0);
    const V = (v0 * s2 * e * ome) / kappa + (theta * s2 * ome * ome) / (2 * kappa);
    const dV = v0 * s2 * e * (2 * e - 1) + theta * s2 * ome * e;
    const sm = Math.sqrt(m);
    const m15 = m * sm;
    return {
      value: sm - V / (8 * m15),
      slope: dm / (2 * sm) - dV / (8 * m15) + (3 * V * dm) / (16 * m15 * m),
    };
  }
  const mu = 0.5 * lam;
  const a = 0.5 * (delta + 1);
  const b = 0.5 * delta;
  // Mode term π_{k*} R_{k*}, k* = ⌊μ⌋, in logs (ln Γ by Lanczos), then ratios outward.
  const k0 = Math.floor(mu);
  const logMode = (mu > 0 ? -mu + k0 * log(mu) - logGamma(k0 + 1) : 0) + logGamma(k0 + a) - logGamma(k0 + b);
  const t0 = exp(logMode);
  let sum = t0; // Σ π_k R_k
  let dsum = t0 / (k0 + b); // Σ π_k R_k/(k + b) = 2 Σ π_k (R_{k+1} − R_k)
  const spread = 10 * Math.sqrt(mu) + 20;
  if (mu > 0) {
    // Upward: term_{k+1} = term_k · μ/(k+1) · (k+a)/(k+b).
    let term = t0;
    for (let k = k0; k < k0 + 200000; k++) {
      term *= ((mu / (k + 1)) * (k + a)) / (k + b);
      sum += term;
      dsum += term / (k + 1 + b);
      if (k - k0 > spread && term < 1e-17 * sum) break;
    }
    // Downward: term_{k−1} = term_k · k/μ · (k − 1 + b)/(k − 1 + a).
    term = t0;
    for (let k = k0; k > 0; k--) {
      term *= ((k / mu) * (k - 1 + b)) / (k - 1 + a);
      sum += term;
      dsum += term / (k - 1 + b);
      if (k0 - k > spread && term < 1e-17 * sum) break;
    }
  }
  const root = Math.sqrt(2 * cbar);
  const dRoot = (s2 * e) / (4 * root);
  const dMu = (-2 * kappa * kappa * v0 * e) / (s2 * ome * ome);
  return { value: root * sum, slope: dRoot * sum + root * dMu * 0.5 * dsum };
}

/** Rate inputs of the H1-HW characteristic function. */
export interface H1HwRates {
  hw: HullWhiteParams;
  /** Correlation between the equity and the domestic short rate. */
  rhoSR: number;
  /** E[√v(t)] as a function (e.g. {@link sqrtVarianceTable}); default the exact series at each node. */
  sqrtV?: (t: number) => number;
}

/** Absolute tolerance on E[√v] of {@link sqrtVarianceTable} (see there). */
export const SQRT_VARIANCE_TABLE_TOL = 5e-9;

/**
 * E[√v(t)] on [0, tMax] as a table in s = √t interpolated by cubic Hermite polynomials with the exact slopes
 * dE√v/ds = 2s·dE√v/dt of {@link expectedSqrtVarianceWithSlope} (interpolation error O(h⁴), bound h⁴/384·max|g⁗|:
 * C. de Boor, "A Practical Guide to Splines", Springer 1978, Ch. IV). The nodes adapt to the parameters: 16
 * intervals uniform in √t are bisected while the Hermite value at an interval's midpoint misses the exact series
 * there by more than `tol` (default {@link SQRT_VARIANCE_TABLE_TOL}), up to 12 levels; the midpoint of an accepted
 * interval is kept as a node too, so the error left is about tol/16 (common practice for adaptive interpolation).
 * E√v changes fast where the variance law moves from near-Gaussian to its stationary shape (t of order 4v0/σ²), which
 * a fixed grid misses for large vol of variance. Lets every expiry of a calibration share one set of series sums;
 * beyond tMax the exact series is evaluated.
 */
export function sqrtVarianceTable(
  p: HestonParams,
  tMax: number,
  tol = SQRT_VARIANCE_TABLE_TOL,
): (t: number) => number {
  const sMax = Math.sqrt(Math.max(tMax, 0));
  if (!(sMax > 0)) return (t: number) => expectedSqrtVariance(p, t);
  const S: number[] = [];
  const V: number[] = [];
  const D: number[] = []; // dE√v/ds
  const at = (s: number) => {
    const r = expectedSqrtVarianceWithSlope(p, s * s);
    return { s, v: r.value, d: 2 * s * r.slope };
  };
  const hermiteMid = (l: { v: number; d: number }, r: { v: number; d: number }, h: number) =>
    0.5 * (l.v + r.v) + 0.125 * h * (l.d - r.d);
  const push = (n: { s: number; v: number; d: number }) => {
    S.push(n.s);
    V.push(n.v);
    D.push(n.d);
  };
  /** Appends the nodes of (l, r] (l already appended). */
  const refine = (
    l: { s: number; v: number; d: number },
    r: { s: number; v: number; d: number },
    depth: number,
  ) => {
    const h = r.s - l.s;
    const m = at(0.5 * (l.s + r.s));
    if (depth >= 12 || Math.abs(hermiteMid(l, r, h) - m.v) <= tol) {
      push(m);
      push(r);
      return;
    }
    refine(l, m, depth + 1);
    refine(m, r, depth + 1);
  };
  const n0 = 16;
  let left = at(0);
  push(left);
  for (let i = 1; i <= n0; i++) {
    const right = at((i / n0) * sMax);
    refine(left, right, 0);
    left = right;
  }
  const nS = S.length;
  return (t: number) => {
    const x = Math.sqrt(Math.max(t, 0));
    if (!(x <= sMax)) return expectedSqrtVariance(p, t);
    // Interval [S[i], S[i+1]] holding x, by bisection.
    let lo = 0;
    let hi = nS - 1;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (S[mid]! <= x) lo = mid;
      else hi = mid;
    }
    const h = S[hi]! - S[lo]!;
    const w = (x - S[lo]!) / h;
    const w2 = w * w;
    const w3 = w2 * w;
    // Cubic Hermite basis on [0, 1].
    return (
      (2 * w3 - 3 * w2 + 1) * V[lo]! +
      (w3 - 2 * w2 + w) * h * D[lo]! +
      (3 * w2 - 2 * w3) * V[hi]! +
      (w3 - w2) * h * D[hi]!
    );
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
