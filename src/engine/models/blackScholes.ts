/**
 * Black–Scholes–Merton European options with a continuous dividend yield, Black (1976) on a forward,
 * Garman–Kohlhagen (1983) for FX, the escrowed-dividend model for discrete cash dividends, and implied volatility.
 *
 * Sources:
 * - Black & Scholes (1973), Merton (1973): price with continuous yield q, as written in Haug (1998),
 *   'The Complete Guide to Option Pricing Formulas', Sec. 1.1.6 (generalised Black–Scholes), pp. 2–8.
 * - Greeks: Haug (1998), Sec. 1.3, pp. 11–16 (delta, gamma, vega, theta, rho, carry/dividend rho).
 * - Black (1976): the same formula on a forward F with discount factor P(0,T); Haug (1998) p. 4.
 * - Garman & Kohlhagen (1983): q = r_f; Haug (1998) p. 5.
 * - Escrowed dividends: spot less the present value of the cash dividends paid before expiry, Hull, 'Options,
 *   Futures, and Other Derivatives', chapter on Black–Scholes–Merton, European options on dividend-paying stocks.
 * - Implied volatility: normalised price b(x, s) with x = ln(F/K), s = σ√T, as in Jäckel (2006) 'By implication'
 *   (Wilmott, Nov. 2006) and Jäckel (2015) 'Let's be rational' (Wilmott, Jan. 2015), Sec. 2. The root is found by
 *   safeguarded Newton steps on a transformed objective chosen per region, see {@link bsImpliedVol}. This is not
 *   Jäckel's full algorithm (no rational initial guesses, no Householder steps); section numbers are from memory.
 */
import { fail, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import { normCdf, normInv, normPdf } from '../math/normal.ts';
import { exp, log } from '../math/detMath.ts';

/** Call or put. */
export type OptionType = 'call' | 'put';

/** Inputs of a Black–Scholes–Merton European option. */
export interface BsInput {
  type: OptionType;
  /** Spot price (currency units, > 0). */
  S: number;
  /** Strike (currency units, > 0). */
  K: number;
  /** Time to expiry in years (> 0). */
  T: number;
  /** Continuously compounded risk-free rate (decimal per year). */
  r: number;
  /** Continuous dividend yield (decimal per year); for FX the foreign rate. */
  q: number;
  /** Lognormal volatility (decimal per √year, ≥ 0). */
  vol: number;
}

/** Greeks of a European option, per unit of notional. Vega, rho and dividend rho per 1.00 (not per 1 %), theta per year. */
export interface BsGreeks {
  price: number;
  /** ∂V/∂S. */
  delta: number;
  /** ∂²V/∂S² (per currency unit). */
  gamma: number;
  /** ∂V/∂σ per 1.00 of vol. */
  vega: number;
  /** ∂V/∂t per year of calendar time (= −∂V/∂T). */
  theta: number;
  /** ∂V/∂r per 1.00 of rate. */
  rho: number;
  /** ∂V/∂q per 1.00 of dividend yield. */
  dividendRho: number;
}

const SQRT_2PI_INV = 0.3989422804014327;

function validate(where: string, p: BsInput): void {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', `${where}.type`, "must be 'call' or 'put'", p.type);
  requirePositive(`${where}.S`, p.S, 'give the spot price as a positive number');
  requirePositive(`${where}.K`, p.K, 'give the strike as a positive number');
  requirePositive(`${where}.T`, p.T, 'the option must expire after the valuation date (T in years > 0)');
  requireFinite(`${where}.r`, p.r);
  requireFinite(`${where}.q`, p.q);
  requireNonNegative(`${where}.vol`, p.vol, 'give the volatility as a decimal, e.g. 0.2 for 20 %');
}

/**
 * Undiscounted Black price E[(F − K)^+] or E[(K − F)^+] for total standard deviation `sd` = σ√T (Black 1976).
 * With sd = 0 it returns the intrinsic value of the forward.
 */
export function blackUndiscounted(type: OptionType, F: number, K: number, sd: number): number {
  if (sd <= 0) return type === 'call' ? Math.max(F - K, 0) : Math.max(K - F, 0);
  const d1 = log(F / K) / sd + 0.5 * sd;
  const d2 = d1 - sd;
  return type === 'call' ? F * normCdf(d1) - K * normCdf(d2) : K * normCdf(-d2) - F * normCdf(-d1);
}

/** Black–Scholes–Merton price (currency units), Haug (1998) p. 2 (generalised BSM with b = r − q). */
export function bsPrice(p: BsInput): number {
  validate('bs', p);
  const F = p.S * exp((p.r - p.q) * p.T);
  return exp(-p.r * p.T) * blackUndiscounted(p.type, F, p.K, p.vol * Math.sqrt(p.T));
}

/** Black–Scholes–Merton price and Greeks in closed form, Haug (1998) Sec. 1.3 pp. 11–16. Requires vol > 0. */
export function bsGreeks(p: BsInput): BsGreeks {
  validate('bs', p);
  requirePositive('bs.vol', p.vol, 'Greeks need a volatility > 0');
  const { S, K, T, r, q, vol } = p;
  const sqT = Math.sqrt(T);
  const sd = vol * sqT;
  const dq = exp(-q * T);
  const dr = exp(-r * T);
  const d1 = (log(S / K) + (r - q + 0.5 * vol * vol) * T) / sd;
  const d2 = d1 - sd;
  const nd1 = normPdf(d1);
  const gamma = (dq * nd1) / (S * sd);
  const vega = S * dq * nd1 * sqT;
  const decay = -(S * dq * nd1 * vol) / (2 * sqT);
  if (p.type === 'call') {
    const Nd1 = normCdf(d1);
    const Nd2 = normCdf(d2);
    return {
      price: S * dq * Nd1 - K * dr * Nd2,
      delta: dq * Nd1,
      gamma,
      vega,
      theta: decay - r * K * dr * Nd2 + q * S * dq * Nd1,
      rho: K * T * dr * Nd2,
      dividendRho: -T * S * dq * Nd1,
    };
  }
  const Nm1 = normCdf(-d1);
  const Nm2 = normCdf(-d2);
  return {
    price: K * dr * Nm2 - S * dq * Nm1,
    delta: -dq * Nm1,
    gamma,
    vega,
    theta: decay + r * K * dr * Nm2 - q * S * dq * Nm1,
    rho: -K * T * dr * Nm2,
    dividendRho: T * S * dq * Nm1,
  };
}

/** Inputs of a Black (1976) option on a forward. */
export interface Black76Input {
  type: OptionType;
  /** Forward (or futures) price for expiry T (> 0). */
  F: number;
  K: number;
  /** Years to expiry (> 0). */
  T: number;
  /** Discount factor to the payment date (0 < df). */
  df: number;
  /** Lognormal vol of the forward (decimal per √year). */
  vol: number;
}

/** Black (1976) price: df · Black(F, K, σ√T), Haug (1998) p. 4. */
export function black76(p: Black76Input): number {
  requirePositive('black76.F', p.F);
  requirePositive('black76.K', p.K);
  requirePositive('black76.T', p.T, 'the option must expire after the valuation date');
  requirePositive('black76.df', p.df);
  requireNonNegative('black76.vol', p.vol);
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'black76.type', "must be 'call' or 'put'", p.type);
  return p.df * blackUndiscounted(p.type, p.F, p.K, p.vol * Math.sqrt(p.T));
}

/** Inputs of a Garman–Kohlhagen FX option: S in domestic per foreign unit. */
export interface GarmanKohlhagenInput {
  type: OptionType;
  S: number;
  K: number;
  T: number;
  /** Domestic continuously compounded rate. */
  rDomestic: number;
  /** Foreign continuously compounded rate. */
  rForeign: number;
  vol: number;
}

/** Garman & Kohlhagen (1983): Black–Scholes–Merton with q = r_f (Haug 1998, p. 5). Price in domestic units per foreign unit. */
export function garmanKohlhagen(p: GarmanKohlhagenInput): number {
  return bsPrice({ type: p.type, S: p.S, K: p.K, T: p.T, r: p.rDomestic, q: p.rForeign, vol: p.vol });
}

/** A cash dividend: time in years and amount in currency units. */
export interface CashDividend {
  t: number;
  amount: number;
}

/**
 * European option on a stock paying discrete cash dividends, escrowed model: the lognormal part is S minus the
 * present value of the dividends paid before T, Hull (OFOD, BSM chapter). Uses the flat rate r for discounting and
 * q on top (usually 0).
 */
export function bsPriceCashDividends(p: BsInput & { dividends: CashDividend[] }): number {
  validate('bs', p);
  let pv = 0;
  p.dividends.forEach((d, i) => {
    requireFinite(`bs.dividends[${i}].t`, d.t);
    requireNonNegative(`bs.dividends[${i}].amount`, d.amount);
    if (d.t > 0 && d.t <= p.T) pv += d.amount * exp(-p.r * d.t);
  });
  const S = p.S - pv;
  if (!(S > 0))
    fail(
      'E_DIVIDENDS_EXCEED_SPOT',
      'bs.dividends',
      'must have a present value below the spot',
      pv,
      'check the amounts',
    );
  return bsPrice({ ...p, S });
}

// ---------------------------------------------------------------------------------------------------------------
// Implied volatility on the normalised price (Jäckel 2006, 2015): b(x, s) = e^{x/2} Φ(x/s + s/2) − e^{−x/2} Φ(x/s − s/2)
// for an out-of-the-money call (x = ln(F/K) ≤ 0), s = σ√T, b = undiscounted price / √(FK).

/**
 * Mills-type ratio Y(z) = Φ(z)/φ(z) for z ≤ 0, to full relative accuracy. For z < −10 the Laplace continued fraction
 * Φ(z)/φ(z) = 1/(|z| + 1/(|z| + 2/(|z| + 3/(…)))) (Abramowitz & Stegun 1964, eq. 26.2.14), else the ratio of the
 * Cody normal cdf and the density.
 */
function millsRatio(z: number): number {
  if (z > -10) return normCdf(z) / normPdf(z);
  const y = -z;
  let f = y;
  for (let k = 24; k >= 1; k--) f = y + k / f;
  return 1 / f;
}

/** Normalised out-of-the-money call b(x, s), x ≤ 0, in the form φ(h)·e^{x/2}·[Y(h + t) − Y(h − t)] free of cancellation. */
function normalisedOtm(x: number, s: number): number {
  const h = x / s;
  const t = 0.5 * s;
  // φ(h+t) e^{x/2} = φ(h−t) e^{−x/2} = exp(−(h² + t²)/2)/√(2π) since h·t = x/2 (Jäckel 2015, Sec. 2).
  const g = SQRT_2PI_INV * exp(-0.5 * (h * h + t * t));
  if (h + t < -1) return g * (millsRatio(h + t) - millsRatio(h - t));
  return exp(0.5 * x) * normCdf(h + t) - exp(-0.5 * x) * normCdf(h - t);
}

/** Inputs of an implied-vol inversion: as {@link BsInput} with the price in place of the vol. */
export interface BsImpliedVolInput {
  type: OptionType;
  /** Option price (currency units). */
  price: number;
  S: number;
  K: number;
  T: number;
  r: number;
  q: number;
}

/**
 * Solves b(x, s) = β for s ≥ 0 given x ≤ 0 and 0 < β < e^{x/2}. Below the inflection point s_c = √(2|x|) the
 * objective is f = 1/√(−ln b), nearly linear in s because ln b ≈ −x²/(2s²) (Jäckel 2015, Sec. 3, lower region);
 * above it, f = ln(e^{x/2} − b), which is nearly linear where b approaches its bound. Each iteration is a Halley step
 * s − (f/f′)/(1 − f f″/(2f′²)) (Householder's method of order 2; A. S. Householder, 'The Numerical Treatment of a
 * Single Nonlinear Equation', McGraw-Hill 1970), with f′ and f″ by the chain rule from the normalised vega
 * v = ∂b/∂s = e^{−(h² + t²)/2}/√(2π) and ∂v/∂s = v (h²/s − s/4), h = x/s, t = s/2 (Jäckel 2015, Sec. 2); b and v
 * share one exponential. Steps are kept inside a bracket that shrinks every iteration; a step leaving it becomes a
 * bisection. The iteration stops once a Halley step changes s by less than 1e-9 relative: with third-order
 * convergence the error after that step is of the order of the cube of the step (common practice).
 */
function solveNormalised(x: number, beta: number): number {
  const bMax = exp(0.5 * x);
  const bMin = 1 / bMax;
  const gapTarget = bMax - beta;
  let lo = 0;
  let hi = Infinity;
  const sc = Math.sqrt(-2 * x);
  const bc = sc > 0 ? normalisedOtm(x, sc) : 0;
  const upper = beta > bc;
  let s: number;
  if (x === 0) {
    // Exact: b = 2Φ(s/2) − 1.
    return 2 * normInv(0.5 * (1 + beta));
  }
  if (!upper) {
    // Asymptotic start from ln b ≈ −x²/(2 s²) (lower region).
    s = Math.min(sc, -x / Math.sqrt(-2 * log(beta)));
    hi = sc;
  } else {
    lo = sc;
    // Start from the at-the-money relation applied to the gap, kept above s_c.
    s = Math.max(sc * 1.0001, 2 * normInv(Math.min(0.5 * (1 + beta / bMax), 1 - 1e-16)) + sc * 0.5);
  }
  const lnT = upper ? log(gapTarget) : 1 / Math.sqrt(-log(beta));
  for (let it = 0; it < 60; it++) {
    const h = x / s;
    const t = 0.5 * s;
    const v = SQRT_2PI_INV * exp(-0.5 * (h * h + t * t));
    const dv = v * ((h * h) / s - 0.25 * s);
    let f: number;
    let d1: number;
    let d2: number;
    if (upper) {
      // gap = e^{x/2} Φ(−h−t) + e^{−x/2} Φ(h−t), ∂gap/∂s = −v
      const gap = bMax * normCdf(-h - t) + bMin * normCdf(h - t);
      f = log(gap) - lnT;
      d1 = -v / gap;
      d2 = -dv / gap - d1 * d1;
      if (f > 0) lo = Math.max(lo, s);
      else hi = Math.min(hi, s);
    } else {
      const b =
        h + t < -1
          ? v * (millsRatio(h + t) - millsRatio(h - t))
          : bMax * normCdf(h + t) - bMin * normCdf(h - t);
      const lb = -log(b);
      const w = 1 / Math.sqrt(lb);
      f = w - lnT;
      // w(b) = (−ln b)^{−1/2}: w′ = ½ w³/b, w″ = ½ w³ (1.5 w² − 1)/b²
      const w1 = (0.5 * w * w * w) / b;
      const w2 = (w1 * (1.5 * w * w - 1)) / b;
      d1 = w1 * v;
      d2 = w2 * v * v + w1 * dv;
      if (f < 0) lo = Math.max(lo, s);
      else hi = Math.min(hi, s);
    }
    // The objective is exactly at its target (a step would be 0, at the bracket's end): s is the root.
    if (f === 0) return s;
    const newton = f / d1;
    const denom = 1 - (0.5 * newton * d2) / d1;
    // Halley where its correction is moderate, Newton otherwise.
    const step = denom > 0.5 && denom < 2 ? newton / denom : newton;
    let next = s - step;
    let bisected = false;
    if (!(next > lo && next < hi) || !Number.isFinite(next)) {
      next = Number.isFinite(hi) ? 0.5 * (lo + hi) : 2 * s;
      bisected = true;
    }
    const change = Math.abs(next - s);
    if (change <= 1e-15 * s || (!bisected && change <= 1e-9 * s)) return next;
    s = next;
  }
  return s;
}

/**
 * Black–Scholes implied volatility (decimal per √year) of a European price. Converts the quote to the normalised
 * out-of-the-money call by put–call parity and the symmetry put(x) = call(−x) of normalised prices (Jäckel 2015, Sec. 2),
 * then solves as in `solveNormalised`. Converges for deep in- and out-of-the-money quotes to about 1e-13 relative in s
 * wherever the price carries that information. Prices outside the no-arbitrage bounds throw `E_PRICE_ARBITRAGE`.
 */
export function bsImpliedVol(p: BsImpliedVolInput): number {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'iv.type', "must be 'call' or 'put'", p.type);
  requireFinite('iv.price', p.price);
  requirePositive('iv.S', p.S);
  requirePositive('iv.K', p.K);
  requirePositive('iv.T', p.T, 'the option must expire after the valuation date');
  requireFinite('iv.r', p.r);
  requireFinite('iv.q', p.q);
  const F = p.S * exp((p.r - p.q) * p.T);
  const dfr = exp(-p.r * p.T);
  const undiscounted = p.price / dfr;
  const s = impliedSdFromUndiscounted(p.type, undiscounted, F, p.K, 'iv.price');
  return s / Math.sqrt(p.T);
}

/**
 * Implied total standard deviation s = σ√T from an undiscounted Black price. Exported for Black (1976) quotes.
 * Throws `E_PRICE_ARBITRAGE` (naming `field`) if the price is below intrinsic or above its upper bound.
 */
export function impliedSdFromUndiscounted(
  type: OptionType,
  price: number,
  F: number,
  K: number,
  field = 'price',
): number {
  const intrinsic = type === 'call' ? Math.max(F - K, 0) : Math.max(K - F, 0);
  const upperBound = type === 'call' ? F : K;
  if (!(price >= intrinsic))
    fail(
      'E_PRICE_ARBITRAGE',
      field,
      `must be at least the intrinsic value ${intrinsic.toPrecision(12)}`,
      price,
      'a price below intrinsic admits arbitrage; check the quote and the rates',
    );
  if (!(price < upperBound))
    fail(
      'E_PRICE_ARBITRAGE',
      field,
      `must be below the upper bound ${upperBound.toPrecision(12)}`,
      price,
      'a price at or above this bound admits arbitrage',
    );
  // Out-of-the-money time value: call with x = ln(F/K) ≤ 0 by put–call parity C − P = F − K.
  const x = -Math.abs(log(F / K));
  const otmIsCall = F <= K;
  const timeValue =
    type === 'call' ? (otmIsCall ? price : price - (F - K)) : otmIsCall ? price - (K - F) : price;
  // If the OTM option is a put, the normalised put of x' = −x equals the normalised call at x (symmetry).
  const beta = timeValue / Math.sqrt(F * K);
  if (!(beta > 0)) return 0;
  return solveNormalised(x, beta);
}
