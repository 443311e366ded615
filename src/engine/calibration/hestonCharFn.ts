/**
 * Heston characteristic function of ln(S_T/F_0) for the calibration's COS slices. The evaluation itself is the
 * models layer's {@link hestonLogCharFn} (little-trap form of H. Albrecher, P. Mayer, W. Schoutens, J. Tistaert,
 * "The little Heston trap", Wilmott Magazine, Jan 2007; dynamics of S.L. Heston (1993), Rev. Fin. Studies 6(2)),
 * which also keeps full accuracy as σ → 0.
 */
import type { HestonParams } from '../simulation/types.ts';
import { hestonLogCharFn } from '../models/hestonCharFn.ts';
import type { LogCharFn } from './cosPricer.ts';

/** log φ(u) = A(u,T) + C(u,T)·v0 for the Heston model, maturity `expiry` in years. */
export function hestonLogChf(p: HestonParams, expiry: number): LogCharFn {
  return hestonLogCharFn(p, expiry);
}
