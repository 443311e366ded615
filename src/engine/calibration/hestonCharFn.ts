/**
 * Heston characteristic function of ln(S_T/F_0) in the form without the branch-cut problem
 * (H. Albrecher, P. Mayer, W. Schoutens, J. Tistaert, "The little Heston trap", Wilmott Magazine, Jan 2007,
 * eqs. for C and D with g₂ = (b − d)/(b + d) and e^{−dT}); dynamics of S.L. Heston (1993), Rev. Fin. Studies 6(2).
 */
import type { HestonParams } from '../simulation/types.ts';
import type { LogCharFn } from './cosPricer.ts';

/** log φ(u) = A(u,T) + C(u,T)·v0 for the Heston model, maturity `expiry` in years. */
export function hestonLogChf(p: HestonParams, expiry: number): LogCharFn {
  const { v0, kappa, theta, sigma, rho } = p;
  const s2 = sigma * sigma;
  const T = expiry;
  return (u: number, out: Float64Array) => {
    // α = κ − ρσ i u
    const aRe = kappa;
    const aIm = -rho * sigma * u;
    // d = sqrt(α² + σ²(u² + i u))
    const zRe = aRe * aRe - aIm * aIm + s2 * u * u;
    const zIm = 2 * aRe * aIm + s2 * u;
    const r = Math.hypot(zRe, zIm);
    let dRe = Math.sqrt(0.5 * (r + zRe));
    let dIm = Math.sqrt(Math.max(0.5 * (r - zRe), 0));
    if (zIm < 0) dIm = -dIm;
    if (dRe < 0) {
      dRe = -dRe;
      dIm = -dIm;
    }
    // α − d, α + d, g = (α − d)/(α + d)
    const mRe = aRe - dRe;
    const mIm = aIm - dIm;
    const pRe = aRe + dRe;
    const pIm = aIm + dIm;
    const pn = pRe * pRe + pIm * pIm;
    const gRe = (mRe * pRe + mIm * pIm) / pn;
    const gIm = (mIm * pRe - mRe * pIm) / pn;
    // e = exp(−dT)
    const em = Math.exp(-dRe * T);
    const eRe = em * Math.cos(-dIm * T);
    const eIm = em * Math.sin(-dIm * T);
    // 1 − g e, 1 − e, 1 − g
    const geRe = gRe * eRe - gIm * eIm;
    const geIm = gRe * eIm + gIm * eRe;
    const qRe = 1 - geRe;
    const qIm = -geIm;
    const oRe = 1 - eRe;
    const oIm = -eIm;
    // C = (α − d)/σ² · (1 − e)/(1 − g e)
    const qn = qRe * qRe + qIm * qIm;
    const fRe = (oRe * qRe + oIm * qIm) / qn;
    const fIm = (oIm * qRe - oRe * qIm) / qn;
    const cRe = (mRe * fRe - mIm * fIm) / s2;
    const cIm = (mRe * fIm + mIm * fRe) / s2;
    // log((1 − g e)/(1 − g))
    const hRe = 1 - gRe;
    const hIm = -gIm;
    const hn = hRe * hRe + hIm * hIm;
    const rRe = (qRe * hRe + qIm * hIm) / hn;
    const rIm = (qIm * hRe - qRe * hIm) / hn;
    const lRe = 0.5 * Math.log(rRe * rRe + rIm * rIm);
    const lIm = Math.atan2(rIm, rRe);
    const k = (kappa * theta) / s2;
    out[0] = k * (mRe * T - 2 * lRe) + cRe * v0;
    out[1] = k * (mIm * T - 2 * lIm) + cIm * v0;
  };
}
