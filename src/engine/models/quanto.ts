/**
 * Quanto forward and quanto European option under lognormal equity and lognormal FX (fixed exchange rate).
 * The equity S, quoted in the foreign currency, pays in the domestic currency at a fixed rate Ē (domestic per foreign
 * unit). Under the domestic risk-neutral measure the equity drifts at r_f − q − ρσ_Sσ_X (the quanto drift adjustment),
 * E.G. Haug, 'The Complete Guide to Option Pricing Formulas' (1998), fixed exchange-rate foreign equity options
 * (quanto), pp. 105–106:
 *   F_Q = S₀ exp((r_f − q − ρσ_Sσ_X)T),  call = Ē e^{−r_d T}[F_Q N(d₁) − K N(d₂)], σ = σ_S.
 * ρ is the correlation of the equity with the FX rate quoted as domestic per foreign.
 */
import { fail, requireCorrelation, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import { blackUndiscounted, type OptionType } from './blackScholes.ts';
import { exp } from '../math/detMath.ts';

/** Inputs of a quanto option or forward. */
export interface QuantoInput {
  /** Equity spot in its own (foreign) currency. */
  S: number;
  /** Years to expiry/delivery. */
  T: number;
  /** Domestic (payment) continuously compounded rate. */
  rDomestic: number;
  /** Foreign (equity currency) continuously compounded rate. */
  rForeign: number;
  /** Continuous dividend yield of the equity. */
  q: number;
  /** Equity vol (decimal per √year). */
  volS: number;
  /** FX vol (decimal per √year), FX as domestic per foreign unit. */
  volFx: number;
  /** Correlation equity/FX. */
  rho: number;
}

function check(p: QuantoInput): void {
  requirePositive('quanto.S', p.S);
  requirePositive('quanto.T', p.T, 'expiry in years > 0');
  requireFinite('quanto.rDomestic', p.rDomestic);
  requireFinite('quanto.rForeign', p.rForeign);
  requireFinite('quanto.q', p.q);
  requireNonNegative('quanto.volS', p.volS);
  requireNonNegative('quanto.volFx', p.volFx);
  requireCorrelation('quanto.rho', p.rho);
}

/** Quanto-adjusted forward of the equity (foreign currency units): S₀ e^{(r_f − q − ρσ_Sσ_X)T}, Haug (1998) pp. 105–106. */
export function quantoForward(p: QuantoInput): number {
  check(p);
  return p.S * exp((p.rForeign - p.q - p.rho * p.volS * p.volFx) * p.T);
}

/** Quanto European price in domestic currency: Ē e^{−r_d T} Black(F_Q, K, σ_S√T), Haug (1998) pp. 105–106. */
export function quantoEuropean(p: QuantoInput & { type: OptionType; K: number; fixedFx: number }): number {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'quanto.type', "must be 'call' or 'put'", p.type);
  requirePositive('quanto.K', p.K);
  requirePositive('quanto.fixedFx', p.fixedFx, 'fixed exchange rate, domestic per foreign unit');
  const F = quantoForward(p);
  return p.fixedFx * exp(-p.rDomestic * p.T) * blackUndiscounted(p.type, F, p.K, p.volS * Math.sqrt(p.T));
}
