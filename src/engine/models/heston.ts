/**
 * Heston (1993) model inputs shared by the COS and Lewis pricers, and their validation.
 * S. Heston, 'A closed-form solution for options with stochastic volatility with applications to bond and
 * currency options', Review of Financial Studies 6(2), 1993: dS/S = (r − q)dt + √v dW_S,
 * dv = κ(θ − v)dt + σ√v dW_v, d⟨W_S, W_v⟩ = ρ dt.
 */
import { fail, requireCorrelation, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import type { HestonParams } from '../simulation/types.ts';

export type { HestonParams } from '../simulation/types.ts';

/** Market and model for Heston European options of one maturity. */
export interface HestonMarket {
  /** Spot (currency units, > 0). */
  S: number;
  /** Years to expiry (> 0). */
  T: number;
  /** Continuously compounded rate (decimal per year). */
  r: number;
  /** Continuous dividend yield (decimal per year). */
  q: number;
  /** v0 (initial variance), κ (1/year), θ (variance), σ (vol of variance), ρ (correlation). */
  params: HestonParams;
}

/** Throws EngineError naming the field if the Heston inputs are not usable. */
export function validateHeston(where: string, m: HestonMarket): void {
  requirePositive(`${where}.S`, m.S, 'give the spot as a positive number');
  requirePositive(`${where}.T`, m.T, 'the option must expire after the valuation date (T in years > 0)');
  requireFinite(`${where}.r`, m.r);
  requireFinite(`${where}.q`, m.q);
  const p = m.params;
  if (!p || typeof p !== 'object')
    fail('E_MISSING', `${where}.params`, 'must give v0, kappa, theta, sigma, rho', p);
  requireNonNegative(`${where}.params.v0`, p.v0, 'v0 is a variance (vol squared), e.g. 0.04 for 20 %');
  requirePositive(`${where}.params.kappa`, p.kappa, 'mean reversion speed per year, e.g. 1.5');
  requireNonNegative(`${where}.params.theta`, p.theta, 'long-run variance, e.g. 0.04');
  requirePositive(
    `${where}.params.sigma`,
    p.sigma,
    'vol of variance must be > 0; for sigma = 0 use Black–Scholes',
  );
  requireCorrelation(`${where}.params.rho`, p.rho);
}
