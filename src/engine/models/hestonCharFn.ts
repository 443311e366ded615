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
 * the Lewis integral) and {@link hestonExponentGrid} with inlined real/imaginary arithmetic for real u (COS inner
 * loops; {@link hestonCharFnGrid} and the calibration's COS slices, through {@link hestonLogCharFn}, evaluate through it).
 * Tests check that both agree. The gradient grid below repeats the first half of that arithmetic inside its own
 * loop on purpose: it reuses every intermediate (1/d, 1/p², 1/(1 − g e), ...) for the five tangents, and splitting it
 * into calls would recompute or allocate them per point in the calibration's hottest loop.
 */
import { Complex } from '../math/complex.ts';
import type { HestonParams } from '../simulation/types.ts';
import { atan2, cos, exp, log, sin } from '../math/detMath.ts';

/** C and D of the exponent, φ(u) = exp(C + D v₀). */
export interface HestonExponent {
  C: Complex;
  D: Complex;
}

/** The intermediate terms of the little-trap exponent at complex u, shared by the exponent and its gradient. */
function exponentTerms(params: HestonParams, T: number, u: Complex) {
  const { kappa, theta, sigma, rho } = params;
  const s2 = sigma * sigma;
  const iu = Complex.I.mul(u);
  const xi = Complex.of(kappa).sub(iu.scale(rho * sigma));
  const q = iu.add(u.mul(u)); // iu + u²
  const d = xi.mul(xi).add(q.scale(s2)).sqrt();
  const p = xi.add(d); // ξ + d
  const m = q.neg().div(p); // (ξ − d)/σ²
  const g = m.scale(s2).div(p); // g₂ = (ξ − d)/(ξ + d)
  const e = d.scale(-T).exp();
  const oneMinusE = Complex.ONE.sub(e);
  const oneMinusGE = Complex.ONE.sub(g.mul(e));
  const oneMinusG = Complex.ONE.sub(g);
  const D = m.mul(oneMinusE).div(oneMinusGE);
  // ln((1 − g e)/(1 − g)) = log1p(w), w = g(1 − e)/(1 − g)
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
  // κθ/σ² [(ξ − d)T − 2L] = κθ[(ξ − d)/σ² T] − 2κθ/σ² L; the second term is O(1) as σ → 0 because L = O(σ²).
  const kt = kappa * theta;
  const C = m.scale(kt * T).sub(L.scale((2 * kt) / s2));
  return { s2, iu, xi, q, d, p, m, g, e, oneMinusE, oneMinusGE, oneMinusG, D, w, L, kt, C };
}

/** The exponent terms C(u, T) and D(u, T) for complex u (reference implementation on `Complex`). */
export function hestonExponent(params: HestonParams, T: number, u: Complex): HestonExponent {
  const { C, D } = exponentTerms(params, T, u);
  return { C, D };
}

/** φ(u) = E[exp(iu ln(S_T/F_T))] for complex u (reference implementation). */
export function hestonCharFn(params: HestonParams, T: number, u: Complex): Complex {
  const { C, D } = hestonExponent(params, T, u);
  return C.add(D.scale(params.v0)).exp();
}

/**
 * The exponent C + D v₀ and D on a grid of real u, inlined arithmetic (no allocation per point). Writes
 * Re/Im of C + D v₀ into `eRe`, `eIm` and of D into `dRe`, `dIm` (each of length `u.length`). The real line is the
 * shifted one of {@link hestonExponentShiftedGrid} at shift 0 (the same arithmetic, term for term).
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
  hestonExponentShiftedGrid(params, T, u, 0, eRe, eIm, dRe, dIm);
}

/**
 * The exponent ln φ(z) = C + D v₀ on the line z = u − i·`shift` for real u (the Lewis contour, shift = ½), inlined
 * complex arithmetic of the same little-trap form as {@link hestonCharFn} (Albrecher et al. 2007), term for term:
 * iz = (shift, u), ξ = κ − ρσ·iz, q = iz + z², d = √(ξ² + σ²q) principal, m = −q/(ξ + d), g₂ = mσ²/(ξ + d),
 * D = m(1 − e^{−dT})/(1 − g₂e^{−dT}), C = κθT m − (2κθ/σ²) ln(1 + w), w = g₂(1 − e^{−dT})/(1 − g₂).
 * Writes Re and Im of the exponent into `eRe`, `eIm` (and of D into `dRe`, `dIm` when given). Tests check it against
 * the `Complex` version.
 */
export function hestonExponentShiftedGrid(
  params: HestonParams,
  T: number,
  u: ArrayLike<number>,
  shift: number,
  eRe: Float64Array,
  eIm: Float64Array,
  dRe?: Float64Array,
  dIm?: Float64Array,
): void {
  const { v0, kappa, theta, sigma, rho } = params;
  const s2 = sigma * sigma;
  const kt = kappa * theta;
  const twoKtOverS2 = (2 * kt) / s2;
  const xr = kappa - rho * sigma * shift;
  for (let j = 0; j < u.length; j++) {
    const uj = u[j]!;
    // ξ = κ − ρσ(shift + iu)
    const xiI = -rho * sigma * uj;
    // q = iz + z² = (shift + u² − shift², u − 2u·shift)
    const qr = shift + uj * uj - shift * shift;
    const qi = uj - 2 * uj * shift;
    const d2r = xr * xr - xiI * xiI + s2 * qr;
    const d2i = 2 * xr * xiI + s2 * qi;
    const mod = Math.sqrt(d2r * d2r + d2i * d2i);
    const dr = Math.sqrt(Math.max(0, 0.5 * (mod + d2r)));
    let di = Math.sqrt(Math.max(0, 0.5 * (mod - d2r)));
    if (d2i < 0) di = -di;
    const pr = xr + dr;
    const pi = xiI + di;
    const ipden = 1 / (pr * pr + pi * pi);
    const mr = -(qr * pr + qi * pi) * ipden;
    const mi = -(qi * pr - qr * pi) * ipden;
    const gnr = mr * s2;
    const gni = mi * s2;
    const gr = (gnr * pr + gni * pi) * ipden;
    const gi = (gni * pr - gnr * pi) * ipden;
    // e^{−dT}: below 2⁻⁶⁰ it no longer changes 1 − e or 1 − g e in double precision, so it is skipped.
    const drT = dr * T;
    let er = 0;
    let ei = 0;
    if (drT < 41.6) {
      const ex = exp(-drT);
      er = ex * cos(di * T);
      ei = -ex * sin(di * T);
    }
    const omeR = 1 - er;
    const omeI = -ei;
    const omgeR = 1 - (gr * er - gi * ei);
    const omgeI = -(gr * ei + gi * er);
    const nr = mr * omeR - mi * omeI;
    const ni = mr * omeI + mi * omeR;
    const iden = 1 / (omgeR * omgeR + omgeI * omgeI);
    const Dr = (nr * omgeR + ni * omgeI) * iden;
    const Di = (ni * omgeR - nr * omgeI) * iden;
    const wnr = gr * omeR - gi * omeI;
    const wni = gr * omeI + gi * omeR;
    const omgR = 1 - gr;
    const omgI = -gi;
    const iwden = 1 / (omgR * omgR + omgI * omgI);
    const wr = (wnr * omgR + wni * omgI) * iwden;
    const wi = (wni * omgR - wnr * omgI) * iwden;
    let Lr: number;
    let Li: number;
    if (wr * wr + wi * wi < 1e-10) {
      const w2r = wr * wr - wi * wi;
      const w2i = 2 * wr * wi;
      Lr = wr - 0.5 * w2r + (w2r * wr - w2i * wi) / 3;
      Li = wi - 0.5 * w2i + (w2r * wi + w2i * wr) / 3;
    } else {
      Lr = 0.5 * log((1 + wr) * (1 + wr) + wi * wi);
      Li = atan2(wi, 1 + wr);
    }
    eRe[j] = kt * T * mr - twoKtOverS2 * Lr + v0 * Dr;
    eIm[j] = kt * T * mi - twoKtOverS2 * Li + v0 * Di;
    if (dRe && dIm) {
      dRe[j] = Dr;
      dIm[j] = Di;
    }
  }
}

/**
 * ln φ(u) = C + D v₀ at one real u, for a fixed parameter set and maturity `T` (years): writes Re and Im into
 * `out[0]`, `out[1]`. The evaluation is {@link hestonExponentGrid} on a one-point grid (no allocation per point), so
 * the calibration's COS slices, which stop as soon as |φ| is negligible and so cannot size a grid in advance, use the
 * same arithmetic as the pricers here.
 */
export function hestonLogCharFn(params: HestonParams, T: number): (u: number, out: Float64Array) => void {
  const u1 = new Float64Array(1);
  const re = new Float64Array(1);
  const im = new Float64Array(1);
  return (u: number, out: Float64Array): void => {
    u1[0] = u;
    hestonExponentGrid(params, T, u1, re, im);
    out[0] = re[0]!;
    out[1] = im[0]!;
  };
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
    const m = exp(re[j]!);
    const a = im[j]!;
    re[j] = m * cos(a);
    im[j] = m * sin(a);
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
  const { s2, iu, xi, q, d, p, m, g, e, oneMinusE, oneMinusGE, oneMinusG, D, w, L, kt, C } = exponentTerms(
    params,
    T,
    u,
  );
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

/**
 * The gradient of ln φ(u) of {@link hestonExponentGradient} on a grid of real u with inlined arithmetic (no
 * allocation per point), for calibration. Writes ∂E/∂p for p = v0, κ, θ, σ, ρ (in this order) into `gRe[k]`,
 * `gIm[k]`, and E into `eRe`, `eIm`. Tests check it against the `Complex` version.
 */
export function hestonExponentGradientGrid(
  params: HestonParams,
  T: number,
  u: ArrayLike<number>,
  eRe: Float64Array,
  eIm: Float64Array,
  gRe: Float64Array[],
  gIm: Float64Array[],
): void {
  const { v0, kappa, theta, sigma, rho } = params;
  const s2 = sigma * sigma;
  const kt = kappa * theta;
  const coefL = (2 * kt) / s2;
  for (let j = 0; j < u.length; j++) {
    const uj = u[j]!;
    const xr = kappa;
    const xi = -rho * sigma * uj;
    const qr = uj * uj;
    const qi = uj;
    const d2r = xr * xr - xi * xi + s2 * qr;
    const d2i = 2 * xr * xi + s2 * qi;
    const mod = Math.sqrt(d2r * d2r + d2i * d2i);
    const dr = Math.sqrt(0.5 * (mod + d2r));
    let di = Math.sqrt(Math.max(0, 0.5 * (mod - d2r)));
    if (d2i < 0) di = -di;
    // 1/d
    const id2 = 1 / (dr * dr + di * di);
    const idr = dr * id2;
    const idi = -di * id2;
    // p = ξ + d, 1/p, 1/p²
    const pr = xr + dr;
    const pi = xi + di;
    const ipn = 1 / (pr * pr + pi * pi);
    const ipr = pr * ipn;
    const ipi = -pi * ipn;
    const ip2r = ipr * ipr - ipi * ipi;
    const ip2i = 2 * ipr * ipi;
    // m = −q/p
    const mr = -(qr * ipr - qi * ipi);
    const mi = -(qr * ipi + qi * ipr);
    // g = m σ²/p
    const gr = s2 * (mr * ipr - mi * ipi);
    const gi = s2 * (mr * ipi + mi * ipr);
    // e = exp(−dT)
    const ex = exp(-dr * T);
    const er = ex * cos(di * T);
    const ei = -ex * sin(di * T);
    const omeR = 1 - er;
    const omeI = -ei;
    const geR = gr * er - gi * ei;
    const geI = gr * ei + gi * er;
    const omgeR = 1 - geR;
    const omgeI = -geI;
    const iomgeN = 1 / (omgeR * omgeR + omgeI * omgeI);
    const iomgeR = omgeR * iomgeN;
    const iomgeI = -omgeI * iomgeN;
    const omgR = 1 - gr;
    const omgI = -gi;
    const iomgN = 1 / (omgR * omgR + omgI * omgI);
    const iomgR = omgR * iomgN;
    const iomgI = -omgI * iomgN;
    // m(1 − e), D = m(1 − e)/(1 − ge)
    const moR = mr * omeR - mi * omeI;
    const moI = mr * omeI + mi * omeR;
    const Dr = moR * iomgeR - moI * iomgeI;
    const Di = moR * iomgeI + moI * iomgeR;
    // g(1 − e), w = g(1 − e)/(1 − g)
    const goR = gr * omeR - gi * omeI;
    const goI = gr * omeI + gi * omeR;
    const wr = goR * iomgR - goI * iomgI;
    const wi = goR * iomgI + goI * iomgR;
    let Lr: number;
    let Li: number;
    if (wr * wr + wi * wi < 1e-10) {
      const w2r = wr * wr - wi * wi;
      const w2i = 2 * wr * wi;
      Lr = wr - 0.5 * w2r + (w2r * wr - w2i * wi) / 3;
      Li = wi - 0.5 * w2i + (w2r * wi + w2i * wr) / 3;
    } else {
      Lr = 0.5 * log((1 + wr) * (1 + wr) + wi * wi);
      Li = atan2(wi, 1 + wr);
    }
    const i1wN = 1 / ((1 + wr) * (1 + wr) + wi * wi);
    const i1wR = (1 + wr) * i1wN;
    const i1wI = -wi * i1wN;
    eRe[j] = kt * T * mr - coefL * Lr + v0 * Dr;
    eIm[j] = kt * T * mi - coefL * Li + v0 * Di;
    // v0 and θ
    gRe[0]![j] = Dr;
    gIm[0]![j] = Di;
    gRe[2]![j] = kappa * T * mr - ((2 * kappa) / s2) * Lr;
    gIm[2]![j] = kappa * T * mi - ((2 * kappa) / s2) * Li;
    // κ, σ, ρ: tangents (dξ, dσ, d(κθ), d(2κθ/σ²))
    for (let k = 0; k < 3; k++) {
      let dxr: number;
      let dxi: number;
      let dS: number;
      let dKt: number;
      let dCoef: number;
      if (k === 0) {
        dxr = 1;
        dxi = 0;
        dS = 0;
        dKt = theta;
        dCoef = (2 * theta) / s2;
      } else if (k === 1) {
        dxr = 0;
        dxi = -rho * uj;
        dS = 1;
        dKt = 0;
        dCoef = (-4 * kt) / (s2 * sigma);
      } else {
        dxr = 0;
        dxi = -sigma * uj;
        dS = 0;
        dKt = 0;
        dCoef = 0;
      }
      // d(d²) = 2ξ dξ + 2σ dσ q; dd = d(d²)/(2d)
      const dd2r = 2 * (xr * dxr - xi * dxi) + 2 * sigma * dS * qr;
      const dd2i = 2 * (xr * dxi + xi * dxr) + 2 * sigma * dS * qi;
      const ddr = 0.5 * (dd2r * idr - dd2i * idi);
      const ddi = 0.5 * (dd2r * idi + dd2i * idr);
      const dpr = dxr + ddr;
      const dpi = dxi + ddi;
      // dm = q dp / p²
      const qdpR = qr * dpr - qi * dpi;
      const qdpI = qr * dpi + qi * dpr;
      const dmr = qdpR * ip2r - qdpI * ip2i;
      const dmi = qdpR * ip2i + qdpI * ip2r;
      // dg = (dm σ² + 2σ dσ m)/p − m σ² dp/p²
      const aR = dmr * s2 + 2 * sigma * dS * mr;
      const aI = dmi * s2 + 2 * sigma * dS * mi;
      const mdpR = mr * dpr - mi * dpi;
      const mdpI = mr * dpi + mi * dpr;
      const dgr = aR * ipr - aI * ipi - s2 * (mdpR * ip2r - mdpI * ip2i);
      const dgi = aR * ipi + aI * ipr - s2 * (mdpR * ip2i + mdpI * ip2r);
      // de = −T e dd
      const der = -T * (er * ddr - ei * ddi);
      const dei = -T * (er * ddi + ei * ddr);
      // d(ge) = dg e + g de
      const dgeR = dgr * er - dgi * ei + (gr * der - gi * dei);
      const dgeI = dgr * ei + dgi * er + (gr * dei + gi * der);
      // dD = (dm(1 − e) − m de)/(1 − ge) + D · d(ge)/(1 − ge)
      const n1R = dmr * omeR - dmi * omeI - (mr * der - mi * dei);
      const n1I = dmr * omeI + dmi * omeR - (mr * dei + mi * der);
      const t1R = n1R * iomgeR - n1I * iomgeI;
      const t1I = n1R * iomgeI + n1I * iomgeR;
      const dgeOverR = dgeR * iomgeR - dgeI * iomgeI;
      const dgeOverI = dgeR * iomgeI + dgeI * iomgeR;
      const dDr = t1R + (Dr * dgeOverR - Di * dgeOverI);
      const dDi = t1I + (Dr * dgeOverI + Di * dgeOverR);
      // dw = (dg(1 − e) − g de)/(1 − g) + w dg/(1 − g)
      const n2R = dgr * omeR - dgi * omeI - (gr * der - gi * dei);
      const n2I = dgr * omeI + dgi * omeR - (gr * dei + gi * der);
      const t2R = n2R * iomgR - n2I * iomgI;
      const t2I = n2R * iomgI + n2I * iomgR;
      const dgOverR = dgr * iomgR - dgi * iomgI;
      const dgOverI = dgr * iomgI + dgi * iomgR;
      const dwr = t2R + (wr * dgOverR - wi * dgOverI);
      const dwi = t2I + (wr * dgOverI + wi * dgOverR);
      // dL = dw/(1 + w)
      const dLr = dwr * i1wR - dwi * i1wI;
      const dLi = dwr * i1wI + dwi * i1wR;
      // dC = m dκθ T + dm κθ T − L d(2κθ/σ²) − dL 2κθ/σ²; dE = dC + v0 dD
      const slot = k === 0 ? 1 : k === 1 ? 3 : 4;
      gRe[slot]![j] = mr * dKt * T + dmr * kt * T - Lr * dCoef - dLr * coefL + v0 * dDr;
      gIm[slot]![j] = mi * dKt * T + dmi * kt * T - Li * dCoef - dLi * coefL + v0 * dDi;
    }
  }
}
