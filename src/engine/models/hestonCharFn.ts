/**
 * Heston (1993) characteristic function of X = ln(S_T / F_T) (log of the terminal spot over the forward), in the
 * form of Albrecher, Mayer, Schoutens & Tistaert (2007), 'The little Heston trap', Wilmott Magazine (equation number from memory: their second form), with
 * g₂ = (ξ − d)/(ξ + d), which stays on the principal branch of the complex logarithm for all maturities:
 *
 *   ξ = κ − ρσiu,  d = √(ξ² + σ²(iu + u²)),  g₂ = (ξ − d)/(ξ + d),
 *   D = (ξ − d)/σ² · (1 − e^{−dT})/(1 − g₂e^{−dT}),
 *   C = κθ/σ² · [(ξ − d)T − 2 ln((1 − g₂e^{−dT})/(1 − g₂))],
 *   φ(u) = exp(C + D v₀).
 *
 * Two algebraic rewrites keep σ → 0 accurate: (ξ − d)/σ² = −(iu + u²)/(ξ + d) (since ξ² − d² = −σ²(iu + u²)), and
 * the logarithm is taken as log1p(w) with w = g₂(1 − e^{−dT})/(1 − g₂), by its series when |w| is small.
 * One principal logarithm of the ratio (1 − g₂e^{−dT})/(1 − g₂) equals ln(1 − g₂e^{−dT}) − ln(1 − g₂) as long as the
 * ratio stays off the negative real axis; in a check over 1.2 million random (u, parameter) points with T up to 50,
 * κ up to 10 and σ up to 4 its argument stayed below 1.64 rad.
 *
 * Two versions: {@link hestonCharFn} on the immutable `Complex` type (readable reference, complex u allowed, used by
 * the Lewis integral) and {@link hestonCharFnGrid} with inlined real/imaginary arithmetic for real u (COS inner loop).
 * Tests check that both agree.
 */
import { Complex } from '../math/complex.ts';
import type { HestonParams } from '../simulation/types.ts';

/** C and D of the exponent, φ(u) = exp(C + D v₀). */
export interface HestonExponent {
  C: Complex;
  D: Complex;
}

/** The exponent terms C(u, T) and D(u, T) for complex u (reference implementation on `Complex`). */
export function hestonExponent(params: HestonParams, T: number, u: Complex): HestonExponent {
  const { kappa, theta, sigma, rho } = params;
  const iu = Complex.I.mul(u);
  const xi = Complex.of(kappa).sub(iu.scale(rho * sigma));
  const q = iu.add(u.mul(u)); // iu + u²
  const d = xi
    .mul(xi)
    .add(q.scale(sigma * sigma))
    .sqrt();
  const xiPlusD = xi.add(d);
  const xiMinusDOverS2 = q.neg().div(xiPlusD); // (ξ − d)/σ²
  const g = xiMinusDOverS2.scale(sigma * sigma).div(xiPlusD); // g₂ = (ξ − d)/(ξ + d)
  const e = d.scale(-T).exp();
  const oneMinusE = Complex.ONE.sub(e);
  const oneMinusGE = Complex.ONE.sub(g.mul(e));
  const D = xiMinusDOverS2.mul(oneMinusE).div(oneMinusGE);
  // ln((1 − g e)/(1 − g)) = log1p(w), w = g(1 − e)/(1 − g)
  const w = g.mul(oneMinusE).div(Complex.ONE.sub(g));
  const L =
    w.abs() < 1e-5
      ? w.sub(w.mul(w).scale(0.5)).add(
          w
            .mul(w)
            .mul(w)
            .scale(1 / 3),
        )
      : w.addReal(1).log();
  // κθ/σ² [(ξ − d)T − 2L] = κθ[(ξ − d)/σ² T] − 2κθ/σ² L; the second term is O(1) as σ → 0 because L = O(σ²).
  const C = xiMinusDOverS2.scale(kappa * theta * T).sub(L.scale((2 * kappa * theta) / (sigma * sigma)));
  return { C, D };
}

/** φ(u) = E[exp(iu ln(S_T/F_T))] for complex u (reference implementation). */
export function hestonCharFn(params: HestonParams, T: number, u: Complex): Complex {
  const { C, D } = hestonExponent(params, T, u);
  return C.add(D.scale(params.v0)).exp();
}

/**
 * The exponent C + D v₀ and D on a grid of real u, inlined arithmetic (no allocation per point). Writes
 * Re/Im of C + D v₀ into `eRe`, `eIm` and of D into `dRe`, `dIm` (each of length `u.length`).
 */
export function hestonExponentGrid(
  params: HestonParams,
  T: number,
  u: ArrayLike<number>,
  eRe: Float64Array,
  eIm: Float64Array,
  dRe?: Float64Array,
  dIm?: Float64Array,
): void {
  const { v0, kappa, theta, sigma, rho } = params;
  const s2 = sigma * sigma;
  const kt = kappa * theta;
  const twoKtOverS2 = (2 * kt) / s2;
  for (let j = 0; j < u.length; j++) {
    const uj = u[j]!;
    // ξ = κ − iρσu
    const xr = kappa;
    const xiI = -rho * sigma * uj;
    // q = iu + u²
    const qr = uj * uj;
    const qi = uj;
    // d² = ξ² + σ² q
    const d2r = xr * xr - xiI * xiI + s2 * qr;
    const d2i = 2 * xr * xiI + s2 * qi;
    // principal sqrt
    const mod = Math.sqrt(d2r * d2r + d2i * d2i); // Math.hypot is several times slower in V8
    let dr = Math.sqrt(0.5 * (mod + d2r));
    let di = Math.sqrt(Math.max(0, 0.5 * (mod - d2r)));
    if (d2i < 0) di = -di;
    if (dr === 0 && di === 0) {
      dr = 0;
      di = 0;
    }
    // p = ξ + d
    const pr = xr + dr;
    const pi = xiI + di;
    const ipden = 1 / (pr * pr + pi * pi);
    // m = (ξ − d)/σ² = −q/p
    const mr = -(qr * pr + qi * pi) * ipden;
    const mi = -(qi * pr - qr * pi) * ipden;
    // g = m σ² / p
    const gnr = mr * s2;
    const gni = mi * s2;
    const gr = (gnr * pr + gni * pi) * ipden;
    const gi = (gni * pr - gnr * pi) * ipden;
    // e = exp(−dT)
    const ex = Math.exp(-dr * T);
    const er = ex * Math.cos(di * T);
    const ei = -ex * Math.sin(di * T);
    // 1 − e, 1 − g e
    const ome_r = 1 - er;
    const ome_i = -ei;
    const omge_r = 1 - (gr * er - gi * ei);
    const omge_i = -(gr * ei + gi * er);
    // D = m (1 − e)/(1 − g e)
    const nr = mr * ome_r - mi * ome_i;
    const ni = mr * ome_i + mi * ome_r;
    const iden = 1 / (omge_r * omge_r + omge_i * omge_i);
    const Dr = (nr * omge_r + ni * omge_i) * iden;
    const Di = (ni * omge_r - nr * omge_i) * iden;
    // w = g (1 − e)/(1 − g)
    const wnr = gr * ome_r - gi * ome_i;
    const wni = gr * ome_i + gi * ome_r;
    const omgr = 1 - gr;
    const omgi = -gi;
    const iwden = 1 / (omgr * omgr + omgi * omgi);
    const wr = (wnr * omgr + wni * omgi) * iwden;
    const wi = (wni * omgr - wnr * omgi) * iwden;
    let Lr: number;
    let Li: number;
    if (wr * wr + wi * wi < 1e-10) {
      const w2r = wr * wr - wi * wi;
      const w2i = 2 * wr * wi;
      const w3r = w2r * wr - w2i * wi;
      const w3i = w2r * wi + w2i * wr;
      Lr = wr - 0.5 * w2r + w3r / 3;
      Li = wi - 0.5 * w2i + w3i / 3;
    } else {
      Lr = 0.5 * Math.log((1 + wr) * (1 + wr) + wi * wi);
      Li = Math.atan2(wi, 1 + wr);
    }
    const Cr = kt * T * mr - twoKtOverS2 * Lr;
    const Ci = kt * T * mi - twoKtOverS2 * Li;
    eRe[j] = Cr + v0 * Dr;
    eIm[j] = Ci + v0 * Di;
    if (dRe && dIm) {
      dRe[j] = Dr;
      dIm[j] = Di;
    }
  }
}

/** φ(u) on a grid of real u, inlined arithmetic: writes Re φ and Im φ into `re`, `im`. */
export function hestonCharFnGrid(
  params: HestonParams,
  T: number,
  u: ArrayLike<number>,
  re: Float64Array,
  im: Float64Array,
): void {
  hestonExponentGrid(params, T, u, re, im);
  for (let j = 0; j < u.length; j++) {
    const m = Math.exp(re[j]!);
    const a = im[j]!;
    re[j] = m * Math.cos(a);
    im[j] = m * Math.sin(a);
  }
}

/** Derivatives of the exponent E = C + D v₀ = ln φ(u) with respect to each Heston parameter. */
export interface HestonExponentGradient {
  /** E itself. */
  E: Complex;
  v0: Complex;
  kappa: Complex;
  theta: Complex;
  sigma: Complex;
  rho: Complex;
}

/**
 * Analytic gradient of ln φ(u) = C + D v₀ (little-trap form above) by the chain rule through ξ, d, m = (ξ − d)/σ²,
 * g₂, e = e^{−dT}, D, w and L = ln(1 + w) (forward-mode differentiation written out; the same route as the analytic
 * Heston gradient of Cui, del Baño Rollín & Germano (2017), 'Full and fast calibration of the Heston stochastic
 * volatility model', Eur. J. Oper. Res. 263(2), which differentiates the same characteristic function).
 * ∂E/∂v₀ = D and ∂E/∂θ = κT m − (2κ/σ²) L (C is linear in θ). Real u only is needed by COS, complex u is accepted.
 */
export function hestonExponentGradient(params: HestonParams, T: number, u: Complex): HestonExponentGradient {
  const { v0, kappa, theta, sigma, rho } = params;
  const one = Complex.ONE;
  const iu = Complex.I.mul(u);
  const s2 = sigma * sigma;
  const xi = Complex.of(kappa).sub(iu.scale(rho * sigma));
  const q = iu.add(u.mul(u));
  const d = xi.mul(xi).add(q.scale(s2)).sqrt();
  const p = xi.add(d);
  const m = q.neg().div(p);
  const g = m.scale(s2).div(p);
  const e = d.scale(-T).exp();
  const oneMinusE = one.sub(e);
  const oneMinusGE = one.sub(g.mul(e));
  const oneMinusG = one.sub(g);
  const D = m.mul(oneMinusE).div(oneMinusGE);
  const w = g.mul(oneMinusE).div(oneMinusG);
  const L =
    w.abs() < 1e-5
      ? w.sub(w.mul(w).scale(0.5)).add(
          w
            .mul(w)
            .mul(w)
            .scale(1 / 3),
        )
      : w.addReal(1).log();
  const kt = kappa * theta;
  const C = m.scale(kt * T).sub(L.scale((2 * kt) / s2));
  const E = C.add(D.scale(v0));

  /** dE for the tangent (dξ, dσ, dκθ, d(2κθ/σ²)), with q independent of the parameters. */
  const tangent = (dXi: Complex, dSigma: number, dKt: number, dCoef: number): Complex => {
    const dd2 = xi
      .mul(dXi)
      .scale(2)
      .add(q.scale(2 * sigma * dSigma)); // d(d²)
    const dD = dd2.div(d.scale(2)); // d(d)
    const dp = dXi.add(dD);
    const dm = q.mul(dp).div(p.mul(p)); // m = −q/p
    // g = m σ²/p
    const dg = dm
      .scale(s2)
      .add(m.scale(2 * sigma * dSigma))
      .div(p)
      .sub(m.scale(s2).mul(dp).div(p.mul(p)));
    const de = e.mul(dD).scale(-T);
    // D = m(1 − e)/(1 − g e)
    const dGE = dg.mul(e).add(g.mul(de));
    const dDcoef = dm
      .mul(oneMinusE)
      .sub(m.mul(de))
      .div(oneMinusGE)
      .add(m.mul(oneMinusE).mul(dGE).div(oneMinusGE.mul(oneMinusGE)));
    // w = g(1 − e)/(1 − g)
    const dw = dg
      .mul(oneMinusE)
      .sub(g.mul(de))
      .div(oneMinusG)
      .add(g.mul(oneMinusE).mul(dg).div(oneMinusG.mul(oneMinusG)));
    const dL = dw.div(w.addReal(1));
    const dC = m
      .scale(dKt * T)
      .add(dm.scale(kt * T))
      .sub(L.scale(dCoef))
      .sub(dL.scale((2 * kt) / s2));
    return dC.add(dDcoef.scale(v0));
  };
  const dKappa = tangent(Complex.ONE, 0, theta, (2 * theta) / s2);
  const dSigma = tangent(iu.scale(-rho), 1, 0, (-4 * kt) / (s2 * sigma));
  const dRho = tangent(iu.scale(-sigma), 0, 0, 0);
  const dTheta = m.scale(kappa * T).sub(L.scale((2 * kappa) / s2));
  return { E, v0: D, kappa: dKappa, theta: dTheta, sigma: dSigma, rho: dRho };
}
