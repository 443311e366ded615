/**
 * Heston European options by the COS method: F. Fang, C. W. Oosterlee, 'A novel pricing method for European options
 * based on Fourier-cosine series expansions', SIAM J. Sci. Comput. 31(2), 2008. Equation numbers below are from memory;
 * the formulas are checked against the Lewis integral and published prices in the tests.
 *
 * Variable: X = ln(S_T/F_T); one truncation range [a, b] and one pass of the characteristic function serve every
 * strike of a maturity (F&O eq. (9): density coefficients A_k = (2/(b−a)) Re[φ(u_k) e^{−iu_k a}], u_k = kπ/(b−a)).
 * Puts are priced by the cosine series (F&O recommend puts for stability, Sec. 3.3, bounded payoff), calls by
 * put–call parity C = P + df (F − K). Put coefficients on [a, c], c = ln(K/F) clipped to [a, b]:
 *   V_k = K ψ_k(a, c) − F χ_k(a, c)   (F&O eqs. (22)–(23) for χ and ψ),
 *   χ_k(a, c) = [cos(ω(c − a)) e^c − e^a + ω sin(ω(c − a)) e^c]/(1 + ω²),  ψ_k(a, c) = sin(ω(c − a))/ω (k > 0), c − a (k = 0).
 * Per strike, cos/sin(kω(c − a)) come from one rotation recurrence (angle addition), so a strike costs O(N) flops.
 *
 * Truncation (documented choice): [a, b] = c₁ ± L √(c₂ + √|c₄|) (F&O eq. (49)) with L from `defaultTruncationL`; c₁ in
 * closed form (−½ E∫v dt), c₂ and c₄ from the cumulant expansion of Re ln φ(u) = −c₂u²/2 + c₄u⁴/24 − …,
 * read off at two small u by Richardson extrapolation (the exponent C + D v₀ is ln φ exactly, no branch issue).
 * Number of terms N: the series is summed until the size of a term's contribution bound 2(F + K_max)|φ(u_k)|/(kπ)
 * stays below tol/5 for 4 consecutive k (N ≤ 2¹⁶), so N adapts to the maturity (short T has a wide φ).
 *
 * Heavy tails: where the cumulant range is wider than `LEWIS_RANGE_WIDTH` (long expiries with high vol of variance
 * and strong negative correlation, e.g. Andersen (2008) Case I, whose put prices need a range of ±45 in ln S for 1e-9
 * and so ~4000 cosine terms), the slice pricer integrates the Lewis formula on Gauss–Legendre panels instead
 * (`hestonLewisSlice.ts`), unless the caller fixes N, L, the range or the method; the result names the method.
 */
import { fail, requirePositive } from '../errors.ts';
import type { HestonParams } from '../simulation/types.ts';
import type { OptionType } from './blackScholes.ts';
import { type HestonMarket, validateHeston } from './heston.ts';
import { hestonExponentGradientGrid, hestonExponentGrid } from './hestonCharFn.ts';
import { cos, exp, expm1, log, sin } from '../math/detMath.ts';
import { hestonLewisSlice } from './hestonLewisSlice.ts';

/** Options of the COS pricer. */
export interface CosOptions {
  /** Target absolute price error (currency units); default 1e-10 × S. */
  tol?: number;
  /** Truncation half-width in units of √(c₂ + √|c₄|); default from the excess kurtosis, see `defaultTruncationL`. */
  L?: number;
  /** Fixed number of terms (overrides the adaptive choice). */
  N?: number;
  /** Explicit truncation range of X = ln(S_T/F) (overrides L). */
  range?: { a: number; b: number };
  /**
   * `auto` (default): the COS expansion, except where its cumulant range is wider than {@link LEWIS_RANGE_WIDTH}
   * (heavy tails: thousands of cosine terms) and no N, L or range is given, where the slice is priced by the
   * Lewis integral on Gauss–Legendre panels (`hestonLewisSlice`) instead. `cos` or `lewis` force one method.
   */
  method?: 'auto' | 'cos' | 'lewis';
}

/**
 * Width of the COS truncation range (in ln S) beyond which `auto` prices by the Lewis integral. The COS method needs
 * N ≈ U·(b − a)/π cosine terms to reach the frequency U where |φ| is negligible, the panel quadrature about
 * 0.75·U + 48 to 3·U + 36 nodes (panel widths 16 to 4) for the same U; at b − a > 32 the COS expansion costs at
 * least about three times as many characteristic-function evaluations (measured: Andersen (2008) Case I, b − a ≈ 95,
 * 4233 terms against 252 nodes at tol 1e-7), while every case below it keeps the COS prices unchanged.
 */
export const LEWIS_RANGE_WIDTH = 32;

/** A slice of strikes of one maturity. */
export interface HestonSliceInput extends HestonMarket {
  /** Strikes (currency units, > 0). */
  strikes: ArrayLike<number>;
  /** Option type per strike, or one type for all (default 'call'). */
  types?: OptionType | OptionType[];
  options?: CosOptions;
}

/** Prices of a slice, with what the expansion used. */
export interface HestonSliceResult {
  prices: number[];
  /** Truncation range of X = ln(S_T/F). */
  a: number;
  b: number;
  /** Number of cosine terms (COS) or of characteristic-function nodes (Lewis panels) used. */
  N: number;
  /** Which method priced the slice. */
  method: 'cos' | 'lewis';
}

/** Cumulants c₁, c₂, c₄ of X = ln(S_T/F_T) under Heston. */
export function hestonCumulants(params: HestonParams, T: number): { c1: number; c2: number; c4: number } {
  const { v0, kappa, theta } = params;
  const meanIntVar = theta * T + ((v0 - theta) * -expm1(-kappa * T)) / kappa;
  const c1 = -0.5 * meanIntVar;
  // Re ln φ(u) = −c₂u²/2 + c₄u⁴/24 + O(u⁶): w(u) = −2 Re ln φ(u)/u² = c₂ − c₄u²/12 + O(u⁴).
  const scale = Math.sqrt(Math.max(meanIntVar, 1e-12));
  const u1 = 0.4 / scale;
  const u2 = 0.2 / scale;
  const re = new Float64Array(2);
  const im = new Float64Array(2);
  hestonExponentGrid(params, T, Float64Array.of(u1, u2), re, im);
  const w1 = (-2 * re[0]!) / (u1 * u1);
  const w2 = (-2 * re[1]!) / (u2 * u2);
  const c4 = (12 * (w2 - w1)) / (u1 * u1 - u2 * u2);
  const c2 = w2 + (c4 * u2 * u2) / 12;
  return { c1, c2: Math.max(c2, 1e-14), c4 };
}

/**
 * Default truncation multiplier L from the excess kurtosis κ₄ = c₄/c₂²: L = min(48, max(12, 4 + 1.2 κ₄)) at a
 * relative tolerance of 1e-10, scaled by ln(1/relTol)/ln(1e10) (clamped to [0.5, 1.5]) for other tolerances.
 * An empirical rule (not from the paper): fitted so that puts at K/S = 0.5, 1, 2 are within 1e-9·S of the Lewis
 * integral on the published Heston cases (Fang & Oosterlee 2008, Lewis, Kahl & Jäckel 2005, Andersen 2008,
 * Broadie & Kaya 2006) and on T = 0.1 cases with vol of variance up to 2; heavy-tailed cases need L ≈ 20–25 where
 * F&O's L = 10 leaves errors of 1e-5.
 */
export function defaultTruncationL(c2: number, c4: number, relTol = 1e-10): number {
  const kurt = Math.abs(c4) / (c2 * c2);
  const base = Math.min(48, Math.max(12, 4 + 1.2 * kurt));
  // Tails are roughly exponential, so the truncated mass falls like e^{−cL}: scale L with ln(1/tol) (1 at 1e-10).
  const scale = Math.min(1.5, Math.max(0.5, log(1 / relTol) / log(1e10)));
  return base * scale;
}

interface Expansion {
  a: number;
  b: number;
  N: number;
  /** (2/(b−a)) Re[φ(u_k) e^{−iu_k a}], first term halved. */
  A: Float64Array;
  /** Optional gradient coefficients per parameter, same layout. */
  grad?: Float64Array[];
}

function checkStrikes(where: string, strikes: ArrayLike<number>): number {
  if (!strikes || strikes.length === 0)
    fail('E_EMPTY', `${where}.strikes`, 'must list at least one strike', strikes);
  let kMax = 0;
  for (let i = 0; i < strikes.length; i++) {
    requirePositive(`${where}.strikes[${i}]`, strikes[i]!);
    kMax = Math.max(kMax, strikes[i]!);
  }
  return kMax;
}

/** Builds the density coefficients A_k (and, if asked, their derivatives by a supplied exponent map). */
function expand(
  m: HestonMarket,
  F: number,
  kMax: number,
  opts: CosOptions,
  withGradient: boolean,
  onlyV0 = false,
): Expansion {
  const tol = opts.tol ?? 1e-10 * m.S;
  requirePositive('cos.options.tol', tol);
  const { c1, c2, c4 } = hestonCumulants(m.params, m.T);
  const L = opts.L ?? defaultTruncationL(c2, c4, tol / m.S);
  requirePositive('cos.options.L', L);
  const half = L * Math.sqrt(c2 + Math.sqrt(Math.abs(c4)));
  const a = opts.range ? opts.range.a : c1 - half;
  const b = opts.range ? opts.range.b : c1 + half;
  if (!(b > a)) fail('E_RANGE', 'cos.options.range', 'must have b > a', opts.range);
  const width = b - a;
  const fixedN = opts.N;
  const nMax = fixedN ?? 65536;
  const chunk = fixedN ?? 32;
  let A = new Float64Array(Math.min(nMax, 256));
  let grads: Float64Array[] = [];
  let n = 0;
  let quiet = 0;
  const bound = (2 * (F + kMax)) / Math.PI;
  const stop = tol / 5;
  const scale = 2 / width;
  // Scratch buffers reused by every chunk (one allocation per call, not per chunk).
  const u = new Float64Array(chunk);
  const eRe = new Float64Array(chunk);
  const eIm = new Float64Array(chunk);
  while (n < nMax) {
    const m0 = n;
    const m1 = Math.min(nMax, n + chunk);
    const len = m1 - m0;
    const uc = len === chunk ? u : u.subarray(0, len);
    for (let j = 0; j < len; j++) uc[j] = ((m0 + j) * Math.PI) / width;
    hestonExponentGrid(m.params, m.T, uc, eRe, eIm);
    if (m1 > A.length) {
      const grown = new Float64Array(Math.min(nMax, Math.max(m1, 2 * A.length)));
      grown.set(A);
      A = grown;
    }
    let cut = -1;
    for (let j = 0; j < len; j++) {
      const mag = exp(eRe[j]!);
      A[m0 + j] = scale * mag * cos(eIm[j]! - uc[j]! * a);
      if (fixedN === undefined && cut < 0 && m0 + j > 0) {
        quiet = (bound * mag) / (m0 + j) < stop ? quiet + 1 : 0;
        if (quiet >= 4) cut = m0 + j + 1;
      }
    }
    if (withGradient) {
      const g = gradientCoefficients(m, Float64Array.from(uc), a, width, onlyV0);
      grads = g.map((arr, p) => {
        const out = new Float64Array(m1);
        if (grads[p]) out.set(grads[p]!);
        out.set(arr, m0);
        return out;
      });
    }
    n = m1;
    if (cut > 0) {
      n = cut;
      break;
    }
  }
  A[0] = A[0]! * 0.5;
  const out: Expansion = { a, b, N: n, A: A.subarray(0, n) };
  if (withGradient) {
    for (const g of grads) g[0] = g[0]! * 0.5;
    out.grad = grads.map((g) => g.subarray(0, n));
  }
  return out;
}

/** Names of the parameters in the gradient, in this order. */
export const HESTON_GRADIENT_PARAMS = ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const;

/**
 * ∂A_k/∂p for p in (v0, κ, θ, σ, ρ): ∂φ/∂p = (∂E/∂p) φ with E = ln φ, analytic (`hestonExponentGradientGrid`), at the
 * fixed truncation (a, b, N) of the price, so the gradient is that of the truncated series. With `onlyV0` only
 * ∂φ/∂v0 = D φ (from the inlined grid).
 */
function gradientCoefficients(
  m: HestonMarket,
  u: Float64Array,
  a: number,
  width: number,
  onlyV0: boolean,
): Float64Array[] {
  const len = u.length;
  const p = m.params;
  const names = onlyV0 ? (['v0'] as const) : HESTON_GRADIENT_PARAMS;
  const outs = names.map(() => new Float64Array(len));
  const eRe = new Float64Array(len);
  const eIm = new Float64Array(len);
  const dRe = new Float64Array(len);
  const dIm = new Float64Array(len);
  const gRe = onlyV0 ? [] : HESTON_GRADIENT_PARAMS.map(() => new Float64Array(len));
  const gIm = onlyV0 ? [] : HESTON_GRADIENT_PARAMS.map(() => new Float64Array(len));
  if (onlyV0) hestonExponentGrid(p, m.T, u, eRe, eIm, dRe, dIm);
  else hestonExponentGradientGrid(p, m.T, u, eRe, eIm, gRe, gIm);
  for (let j = 0; j < len; j++) {
    const mag = exp(eRe[j]!);
    const ph = eIm[j]! - u[j]! * a;
    // φ e^{−iua}
    const cr = mag * cos(ph);
    const ci = mag * sin(ph);
    if (onlyV0) {
      outs[0]![j] = (2 / width) * (dRe[j]! * cr - dIm[j]! * ci);
      continue;
    }
    for (let k = 0; k < outs.length; k++) outs[k]![j] = (2 / width) * (gRe[k]![j]! * cr - gIm[k]![j]! * ci);
  }
  return outs;
}

/**
 * Strike-independent weights of a coefficient series: P_k = coef_k/ω_k, B_k = coef_k/(1 + ω_k²),
 * W_k = coef_k ω_k/(1 + ω_k²), so that per strike χ = e^c Σ(B_k cos + W_k sin) − e^a Σ B_k and ψ = Σ P_k sin
 * (F&O eqs. (22)–(23) regrouped), with cos/sin(kθ) from the rotation recurrence.
 */
interface PreparedSeries {
  coef: Float64Array;
  P: Float64Array;
  B: Float64Array;
  W: Float64Array;
  sumB: number;
}

function prepare(coef: Float64Array, width: number): PreparedSeries {
  const N = coef.length;
  const P = new Float64Array(N);
  const B = new Float64Array(N);
  const W = new Float64Array(N);
  let sumB = coef[0]!;
  B[0] = coef[0]!;
  for (let k = 1; k < N; k++) {
    const w = (k * Math.PI) / width;
    const inv = 1 / (1 + w * w);
    P[k] = coef[k]! / w;
    B[k] = coef[k]! * inv;
    W[k] = coef[k]! * w * inv;
    sumB += B[k]!;
  }
  return { coef, P, B, W, sumB };
}

/**
 * Σ_k coef_k · V_k for the put on [a, c]: returns the sums for ψ (multiplies K) and χ (multiplies F), and the cosine
 * sum Σ coef_k cos(ω_k(c − a)) (the density at c, for gamma).
 */
function putSums(
  series: PreparedSeries,
  a: number,
  width: number,
  c: number,
): { psi: number; chi: number; cosSum: number } {
  const { coef, P, B, W } = series;
  const N = coef.length;
  const theta = (Math.PI * (c - a)) / width;
  const ct = cos(theta);
  const st = sin(theta);
  // k = 0: ψ₀ = c − a, χ₀ = e^c − e^a
  let psi = coef[0]! * (c - a);
  let chiC = B[0]!;
  let cosSum = coef[0]!;
  let ck = 1;
  let sk = 0;
  for (let k = 1; k < N; k++) {
    // rotate (cos kθ, sin kθ) by θ
    const cn = ck * ct - sk * st;
    sk = sk * ct + ck * st;
    ck = cn;
    psi += P[k]! * sk;
    chiC += B[k]! * ck + W[k]! * sk;
    cosSum += coef[k]! * ck;
  }
  const chi = exp(c) * chiC - exp(a) * series.sumB;
  return { psi, chi, cosSum };
}

function typeAt(types: OptionType | OptionType[] | undefined, i: number, where: string): OptionType {
  const t = Array.isArray(types) ? types[i] : (types ?? 'call');
  if (t !== 'call' && t !== 'put')
    fail('E_OPTION_TYPE', `${where}.types[${i}]`, "must be 'call' or 'put'", t);
  return t;
}

/**
 * What every slice pricer starts with: checked inputs, forward F = S e^{(r−q)T}, discount factor e^{−rT}, the
 * expansion (truncation range, terms, density coefficients; with their parameter gradients when `withGradient`)
 * and the prepared cosine series of the density.
 */
function sliceSetup(input: HestonSliceInput, withGradient: boolean) {
  validateHeston('heston', input);
  const kMax = checkStrikes('heston', input.strikes);
  const F = input.S * exp((input.r - input.q) * input.T);
  const df = exp(-input.r * input.T);
  const ex = expand(input, F, kMax, input.options ?? {}, withGradient);
  const width = ex.b - ex.a;
  return { F, df, ex, width, series: prepare(ex.A, width) };
}

/**
 * Heston European prices of many strikes of one maturity with one characteristic-function pass (COS method).
 * Prices in currency units; accuracy targets `options.tol` (absolute).
 */
export function hestonCosSlice(input: HestonSliceInput): HestonSliceResult {
  const viaLewis = lewisRoute(input);
  if (viaLewis) return viaLewis;
  const { F, df, ex, width, series } = sliceSetup(input, false);
  const prices: number[] = [];
  for (let i = 0; i < input.strikes.length; i++) {
    const K = input.strikes[i]!;
    const c = Math.min(Math.max(log(K / F), ex.a), ex.b);
    const s = putSums(series, ex.a, width, c);
    const put = Math.max(0, df * (K * s.psi - F * s.chi));
    const type = typeAt(input.types, i, 'heston');
    prices.push(type === 'put' ? put : Math.max(0, put + df * (F - K)));
  }
  return { prices, a: ex.a, b: ex.b, N: ex.N, method: 'cos' };
}

/**
 * The Lewis route of the slice pricer (see `CosOptions.method`), or undefined when the slice goes by COS. Under
 * `auto` the COS range is read from the cumulants as in `expand` (two characteristic-function values).
 */
function lewisRoute(input: HestonSliceInput): HestonSliceResult | undefined {
  const o = input.options ?? {};
  const method = o.method ?? 'auto';
  if (method !== 'auto' && method !== 'cos' && method !== 'lewis')
    fail('E_METHOD', 'cos.options.method', "must be 'auto', 'cos' or 'lewis'", method);
  if (method === 'cos') return undefined;
  if (method === 'auto' && (o.N !== undefined || o.L !== undefined || o.range !== undefined))
    return undefined;
  validateHeston('heston', input);
  const tol = o.tol ?? 1e-10 * input.S;
  requirePositive('cos.options.tol', tol);
  const { c1, c2, c4 } = hestonCumulants(input.params, input.T);
  const half = defaultTruncationL(c2, c4, tol / input.S) * Math.sqrt(c2 + Math.sqrt(Math.abs(c4)));
  if (method === 'auto' && !(2 * half > LEWIS_RANGE_WIDTH)) return undefined;
  const r = hestonLewisSlice({ ...input, tol });
  return { prices: r.prices, a: c1 - half, b: c1 + half, N: r.nodes, method: 'lewis' };
}

/** One Heston European option (currency units) by COS. */
export function hestonCos(
  input: HestonMarket & { type: OptionType; K: number; options?: CosOptions },
): number {
  return hestonCosSlice({ ...input, strikes: [input.K], types: input.type }).prices[0]!;
}

/** Heston price and Greeks. */
export interface HestonGreeks {
  price: number;
  /** ∂V/∂S from the COS expansion (exact for the truncated series). */
  delta: number;
  /** ∂²V/∂S² from the COS density at the strike. */
  gamma: number;
  /** ∂V/∂v0 (per 1.00 of initial variance), from ∂φ/∂v0 = Dφ. */
  vegaV0: number;
}

/**
 * Price, delta, gamma (COS expansion: ∂P/∂F = −df E[e^X 1{X < c}], ∂²P/∂F² = df (K/F²) f_X(c)) and the sensitivity to
 * v0 (analytic ∂φ/∂v0). Per strike of one slice.
 */
export function hestonCosGreeks(input: HestonSliceInput): HestonGreeks[] {
  validateHeston('heston', input);
  const F = input.S * exp((input.r - input.q) * input.T);
  const df = exp(-input.r * input.T);
  const growth = exp((input.r - input.q) * input.T);
  const kMax = checkStrikes('heston', input.strikes);
  const ex = expand(input, F, kMax, input.options ?? {}, true, true);
  const width = ex.b - ex.a;
  const series = prepare(ex.A, width);
  const gradSeries = ex.grad ? ex.grad.map((g) => prepare(g, width)) : [];
  const out: HestonGreeks[] = [];
  for (let i = 0; i < input.strikes.length; i++) {
    const K = input.strikes[i]!;
    const c = Math.min(Math.max(log(K / F), ex.a), ex.b);
    const s = putSums(series, ex.a, width, c);
    const type = typeAt(input.types, i, 'heston');
    const putDeltaF = -df * s.chi;
    const deltaPut = putDeltaF * growth;
    const inside = c > ex.a && c < ex.b;
    const gamma = inside ? df * (K / (F * F)) * s.cosSum * growth * growth : 0;
    const delta = type === 'put' ? deltaPut : deltaPut + exp(-input.q * input.T);
    const put = df * (K * s.psi - F * s.chi);
    const price = type === 'put' ? put : put + df * (F - K);
    const v = putSums(gradSeries[0]!, ex.a, width, c);
    out.push({ price, delta, gamma, vegaV0: df * (K * v.psi - F * v.chi) });
  }
  return out;
}

/** Slice prices with the gradient of each price with respect to (v0, κ, θ, σ, ρ). */
export interface HestonSliceGradient extends HestonSliceResult {
  gradient: Record<(typeof HESTON_GRADIENT_PARAMS)[number], number>[];
}

/**
 * Heston slice prices and their gradient with respect to v0, κ, θ, σ, ρ at fixed truncation (a, b, N), for
 * calibration: analytic derivatives of the characteristic function (see `hestonExponentGradient`). The call and put share the gradient (parity does not depend on the parameters).
 */
export function hestonCosSliceWithGradient(input: HestonSliceInput): HestonSliceGradient {
  const { F, df, ex, width, series } = sliceSetup(input, true);
  const gradSeries = ex.grad ? ex.grad.map((g) => prepare(g, width)) : [];
  const prices: number[] = [];
  const gradient: HestonSliceGradient['gradient'] = [];
  for (let i = 0; i < input.strikes.length; i++) {
    const K = input.strikes[i]!;
    const c = Math.min(Math.max(log(K / F), ex.a), ex.b);
    const s = putSums(series, ex.a, width, c);
    const put = df * (K * s.psi - F * s.chi);
    const type = typeAt(input.types, i, 'heston');
    prices.push(type === 'put' ? put : put + df * (F - K));
    const gr = gradSeries.map((coef) => {
      const t = putSums(coef, ex.a, width, c);
      return df * (K * t.psi - F * t.chi);
    });
    gradient.push({ v0: gr[0]!, kappa: gr[1]!, theta: gr[2]!, sigma: gr[3]!, rho: gr[4]! });
  }
  return { prices, a: ex.a, b: ex.b, N: ex.N, method: 'cos', gradient };
}
