/**
 * Heston European options by the Lewis (2000) integral: A. Lewis, 'Option Valuation under Stochastic Volatility'
 * (Finance Press 2000), and 'A simple option formula for general jump-diffusion and other exponential Lévy
 * processes' (2001), the call-price formula with the integration contour at Im u = −1/2 (equation number not
 * given here: cited from memory):
 *
 *   C = df · [F − (√(FK)/π) ∫₀^∞ Re(e^{iuk} φ(u − i/2)) / (u² + 1/4) du],  k = ln(F/K),
 *
 * with φ the characteristic function of X = ln(S_T/F_T) (little-trap form). Used as the second method against COS.
 * The integral is cut where |φ(u − i/2)|/(u² + 1/4) < 1e-17 and integrated by adaptive Gauss–Kronrod.
 */
import { Complex } from '../math/complex.ts';
import { integrateAdaptive } from '../math/quadrature.ts';
import { fail, requirePositive } from '../errors.ts';
import type { OptionType } from './blackScholes.ts';
import { type HestonMarket, validateHeston } from './heston.ts';
import { hestonCharFn } from './hestonCharFn.ts';
import { exp, log } from '../math/detMath.ts';

/** Heston European price (currency units) by the Lewis integral; `absTol` on the integral (default 1e-13). */
export function hestonLewis(input: HestonMarket & { type: OptionType; K: number; absTol?: number }): number {
  validateHeston('heston', input);
  requirePositive('heston.K', input.K);
  if (input.type !== 'call' && input.type !== 'put')
    fail('E_OPTION_TYPE', 'heston.type', "must be 'call' or 'put'", input.type);
  const { S, T, r, q, K, params } = input;
  const F = S * exp((r - q) * T);
  const df = exp(-r * T);
  const k = log(F / K);
  const shift = Complex.of(0, -0.5);
  const integrand = (u: number): number => {
    const phi = hestonCharFn(params, T, Complex.of(u).add(shift));
    const rot = Complex.fromPolar(1, u * k);
    return rot.mul(phi).re / (u * u + 0.25);
  };
  // Cut-off: first u (doubling) where the integrand's envelope is negligible.
  let U = 1;
  while (U < 1e6) {
    const env = hestonCharFn(params, T, Complex.of(U).add(shift)).abs() / (U * U + 0.25);
    if (env < 1e-17) break;
    U *= 1.5;
  }
  const integral = integrateAdaptive(integrand, 0, U, {
    absTol: input.absTol ?? 1e-13,
    relTol: 1e-14,
    maxSegments: 20000,
  });
  const call = df * (F - (Math.sqrt(F * K) / Math.PI) * integral);
  return input.type === 'call' ? call : call - df * (F - K);
}
