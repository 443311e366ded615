/**
 * Heston calibration to an implied-vol grid by COS pricing (Fang & Oosterlee 2008), optionally under Hull–White
 * rates through the H1-HW characteristic function (Grzelak & Oosterlee 2011). Residuals are vega-weighted price
 * errors (model − market)/vega_market, i.e. first-order implied-vol errors in decimals (common practice), or on
 * request exact implied-vol errors; the report gives exact implied-vol errors at the solution either way. Several
 * starting points are run in order, the best kept and the spread of the others reported; by default the remaining
 * starts are skipped once one fits within a tenth of the tolerance (`startRule`, stated in the report). The optimiser
 * updates its Jacobian by Broyden steps between full ones (`jacobian`: differences or analytic). The Feller ratio
 * 2κθ/σ² is a reported diagnostic, not imposed.
 */
import type { DiscountCurve, EquityQuote } from '../market/types.ts';
import type { HestonParams } from '../simulation/types.ts';
import { EngineError, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import {
  cosCallPricesAdaptive,
  prepareCosSlice,
  type LogCharFnGrid,
  type PreparedCosSlice,
} from './cosPricer.ts';
import { h1hwCumulants, h1hwLogChfGrid, sqrtVarianceTable, type H1HwRates } from './h1hwCharFn.ts';
import { hestonExponentGradientGrid, hestonExponentGrid } from '../models/hestonCharFn.ts';
import { defaultTruncationL, hestonCumulants } from '../models/hestonCos.ts';
import { blackImpliedVol, blackPrice, blackVega } from './blackFormulas.ts';
import { fitFromStarts, fitLeastSquares, type FitParameter, type FitReport } from './levenbergMarquardt.ts';
import { gridArbitrageIssues, gridQuotes, type VolQuote } from './volGrid.ts';
import { nowMs } from './clock.ts';
import { log, pow } from '../math/detMath.ts';

export const HESTON_NAMES = ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const;

/** Default bounds of the Heston parameters (common practice). */
export const HESTON_BOUNDS: Record<(typeof HESTON_NAMES)[number], [number, number]> = {
  v0: [1e-4, 1.5],
  kappa: [0.05, 15],
  theta: [1e-4, 1.5],
  sigma: [0.02, 3],
  rho: [-0.99, 0.99],
};

/** One row of the per-instrument fit table. */
export interface VanillaFitRow {
  expiry: number;
  strike: number;
  isCall: boolean;
  marketVol: number;
  modelVol: number;
  marketPrice: number;
  modelPrice: number;
  /** Model − market, in price units (discounted, per unit of underlying). */
  priceError: number;
  /** Model − market implied vol, in vol points (1 = 0.01 of vol). */
  volErrorPoints: number;
  weight: number;
  field: string;
  /**
   * True when the model price lies outside the Black–Scholes no-arbitrage bounds, so it has no implied vol: then
   * `modelVol` is the first-order vol market vol + price error / vega (the residual the fit itself uses).
   */
  volFromPrice?: boolean;
}

export interface HestonCalibrationInput {
  /** Market name of the equity (for messages). */
  name: string;
  equity: EquityQuote;
  /** Discount curve of the equity's currency. */
  curve: DiscountCurve;
  /** Quotes to fit (default: the whole grid). */
  quotes?: VolQuote[];
  /** Weight per quote (default 1). */
  weights?: number[];
  /** Starting points (default: four spread over the plausible region, the first from the ATM term structure). */
  starts?: HestonParams[];
  /**
   * `good-fit-stops` (default): the starts run in order and the rest are skipped once one converges with an RMSE of
   * at most a tenth of the tolerance ({@link fitFromStarts}); `all`: every start runs.
   */
  startRule?: 'good-fit-stops' | 'all';
  /**
   * Jacobian of the residuals for plain Heston: `differences` (default), forward differences of the same COS prices,
   * or `analytic`, from the characteristic function's analytic gradient on the same slices (exact for the truncated
   * series). Either way the optimiser updates it by Broyden steps between full ones. Measured in
   * bench/calibration.bench.ts: once compiled both fit the 5 × 8 grid in about the same time, but from a cold start
   * the analytic one is slower (its larger function is optimised later by the JavaScript engine), so differences are
   * the default. Under rates (H1-HW) the residuals are always differenced.
   */
  jacobian?: 'differences' | 'analytic';
  /** Parameters held fixed at the given values. */
  fixed?: Partial<HestonParams>;
  /** Under Hull–White rates: the H1-HW characteristic function is used. */
  rates?: H1HwRates;
  /** Cosine terms per expiry (default 192). */
  terms?: number;
  maxEvaluations?: number;
  /** Fit tolerance on the RMSE of the implied-vol errors, vol points (default 0.5). */
  toleranceVolPoints?: number;
  /**
   * Residual of each quote: `vega-price` (default) (model − target price)/vega, a first-order implied-vol error, or
   * `implied-vol`, the exact implied-vol difference (one Black inversion per quote and evaluation: slower).
   */
  residuals?: 'vega-price' | 'implied-vol';
  /** Shift of the target vols per quote (decimals), used by the Monte Carlo-corrected refit. */
  targetShift?: number[];
}

/**
 * Which pricer produced a fit's residuals, and the check of the fast pricer against the fitted model's own range.
 * The fast pricer's COS slices have truncation ranges fixed from the market vols (prepared once for every
 * evaluation); at the fitted point the quotes are repriced on a range from the model's cumulants with as many terms
 * as its characteristic function needs. If the two disagree by more than `toleranceVolPoints` on any quote, the fit
 * is rerun from the found point on slices re-prepared on the model's range (`residualPricer: 'model-range'`).
 */
export interface HestonPricerCheck {
  /** COS slices that produced the residuals and rows: ranges from the market vols, or from the fitted model. */
  residualPricer: 'market-range' | 'model-range';
  /** max over quotes |fast − check|/vega at the first fit, in vol points (quotes above the price floor only). */
  disagreementVolPoints: number;
  /** The same at the final point, between the pricer of the residuals and a fresh model-range check. */
  finalDisagreementVolPoints: number;
  /** Threshold of the check, vol points. */
  toleranceVolPoints: number;
  /** Whether the fit was rerun on model-range slices (at most twice, each from the point found). */
  refitted: boolean;
}

/**
 * Thresholds of the pricer check. A quote counts as a disagreement when the two prices differ both by more than
 * {@link PRICER_CHECK_PRICE} × df·F and by more than 0.001 vol points (1e-5 in vol, price difference over the quote's
 * vega). 0.001 vol points is 1/500 of the default fit tolerance and below the three decimals of vol points that fit
 * reports print; the price floor, one hundredth of a basis point of the forward, keeps the fast pricer's numerical
 * noise on far wings of tiny vega out of the check (5e-9·F, 0.0011 vol points, on the Fang–Oosterlee grid's 0.25-year
 * 130 % call), while a range too narrow for the model's tails misprices by 1e-4 to 1e-3 × F (Andersen's Case I grid).
 */
export const PRICER_CHECK_VOL_POINTS = 1e-3;
/** Price floor of the pricer check, in units of df·F (see {@link PRICER_CHECK_VOL_POINTS}). */
export const PRICER_CHECK_PRICE = 1e-6;

export interface HestonCalibration {
  params: HestonParams;
  fit: FitReport;
  /** Pricer of the residuals and its check against the fitted model's own truncation range. */
  pricer: HestonPricerCheck;
  rows: VanillaFitRow[];
  rmseVolPoints: number;
  maxAbsVolPoints: number;
  feller: { ratio: number; satisfied: boolean };
  /** Every start's result (best first). */
  starts: { start: HestonParams; params: HestonParams; rmse: number; converged: boolean }[];
  /**
   * Starts not run, and why: the rule of {@link HestonCalibrationInput.startRule} in words. When some were skipped,
   * `spread` covers only the starts that ran.
   */
  skippedStarts: { starts: HestonParams[]; rule: string };
  /** Min and max of each parameter over the converged starts whose RMSE is within 2× the best. */
  spread: Record<string, { min: number; max: number }>;
  /** Whether the fit converged and met the tolerance. */
  ok: boolean;
  warnings: FieldIssue[];
  seconds: number;
}

/** Groups quotes by expiry so each expiry needs one set of characteristic-function values. */
function slices(quotes: VolQuote[]): { expiry: number; idx: number[] }[] {
  const map = new Map<number, number[]>();
  quotes.forEach((q, i) => {
    const l = map.get(q.expiry) ?? [];
    l.push(i);
    map.set(q.expiry, l);
  });
  return [...map.entries()].sort((a, b) => a[0] - b[0]).map(([expiry, idx]) => ({ expiry, idx }));
}

/** One expiry's quotes with their prepared COS slice (range [lo, lo + width] in ln(S_T/F)). */
interface SliceOfQuotes {
  expiry: number;
  idx: number[];
  lo: number;
  width: number;
  slice: PreparedCosSlice;
}

const prepared = new WeakMap<readonly VolQuote[], Map<string, SliceOfQuotes[]>>();

/** Slices of the quotes with their COS coefficients, prepared once per quote set and number of terms. */
function preparedSlices(quotes: VolQuote[], terms: number) {
  let byTerms = prepared.get(quotes);
  if (!byTerms) {
    byTerms = new Map();
    prepared.set(quotes, byTerms);
  }
  const key = String(terms);
  let list = byTerms.get(key);
  if (!list) {
    list = slices(quotes).map((s) => {
      const qs = s.idx.map((i) => quotes[i]!);
      const q0 = qs[0]!;
      const T = s.expiry;
      const vMax = Math.max(...qs.map((q) => q.vol));
      const vMean = qs.reduce((acc, q) => acc + q.vol, 0) / qs.length;
      // Range from the market vols: centre −½σ̄²T, half-width 12·σ_max√T (at least 0.8 in log-price); with 192
      // terms this prices the demo-like smiles to ~5e-5 vol points (measured against 4096 terms).
      const half = Math.max(12 * vMax * Math.sqrt(T), 0.8);
      const lo = -0.5 * vMean * vMean * T - half;
      return {
        expiry: T,
        idx: s.idx,
        lo,
        width: 2 * half,
        slice: prepareCosSlice({
          forward: q0.forward,
          df: q0.df,
          strikes: qs.map((q) => q.strike),
          lo,
          width: 2 * half,
          terms,
        }),
      };
    });
    byTerms.set(key, list);
  }
  return list;
}

/** Model prices (discounted, out-of-the-money side) of the quotes. */
export function hestonModelPrices(
  p: HestonParams,
  quotes: VolQuote[],
  options: { rates?: H1HwRates; terms?: number } = {},
): number[] {
  return pricesOn(p, quotes, preparedSlices(quotes, options.terms ?? 192), options.rates);
}

/** Model prices (out-of-the-money side) of the quotes on the given prepared slices. */
function pricesOn(p: HestonParams, quotes: VolQuote[], list: SliceOfQuotes[], rates?: H1HwRates): number[] {
  const out = new Array<number>(quotes.length).fill(NaN);
  const sqrtV = rates ? sqrtVarianceTable(p, Math.max(...quotes.map((q) => q.expiry))) : undefined;
  for (const s of list) {
    const T = s.expiry;
    const grid: LogCharFnGrid = rates
      ? h1hwLogChfGrid(p, T, { ...rates, sqrtV })
      : (u, re, im) => hestonExponentGrid(p, T, u, re, im);
    const calls = s.slice.callPricesOnGrid(grid);
    s.idx.forEach((i, k) => {
      const q = quotes[i]!;
      out[i] = q.isCall ? calls[k]! : calls[k]! - q.df * (q.forward - q.strike);
    });
  }
  return out;
}

/** Model prices of the quotes with ∂price/∂(v0, κ, θ, σ, ρ) per quote, on the given prepared slices (Heston only). */
function pricesAndGradientOn(
  p: HestonParams,
  quotes: VolQuote[],
  list: SliceOfQuotes[],
): { prices: number[]; gradient: number[][] } {
  const prices = new Array<number>(quotes.length).fill(NaN);
  const gradient = new Array<number[]>(quotes.length);
  for (const s of list) {
    const T = s.expiry;
    // Analytic ∂ln φ/∂p of the models layer (forward-mode chain rule through the little-trap form).
    const res = s.slice.callPricesWithGradientOnGrid(
      (u, re, im, gRe, gIm) => hestonExponentGradientGrid(p, T, u, re, im, gRe, gIm),
      HESTON_NAMES.length,
    );
    s.idx.forEach((i, k) => {
      const q = quotes[i]!;
      // Put = call − df(F − K): the parity term does not depend on the parameters.
      prices[i] = q.isCall ? res.prices[k]! : res.prices[k]! - q.df * (q.forward - q.strike);
      gradient[i] = res.gradient[k]!;
    });
  }
  return { prices, gradient };
}

/** The check of a fit's pricer: prices on the model's own ranges, and those ranges with the terms they needed. */
interface ModelRangeCheck {
  prices: number[];
  ranges: { expiry: number; idx: number[]; lo: number; width: number; terms: number }[];
}

/**
 * Prices of the quotes on truncation ranges from the model's own cumulants: [c₁ − h, c₁ + h], h = L√(c₂ + √|c₄|)
 * (Fang & Oosterlee 2008, eq. (49), with the models layer's `defaultTruncationL` at 1e-10 relative), c₁, c₂, c₄ of
 * Heston (closed-form mean, Richardson-read c₂, c₄) or of H1-HW (plus the Gaussian rate part), and as many cosine
 * terms as the characteristic function needs for 1e-9 × df·F (`cosCallPricesAdaptive`), a thousandth of the
 * check's price floor.
 */
function modelRangeCheck(p: HestonParams, quotes: VolQuote[], rates?: H1HwRates): ModelRangeCheck {
  const out = new Array<number>(quotes.length).fill(NaN);
  const sqrtV = rates ? sqrtVarianceTable(p, Math.max(...quotes.map((q) => q.expiry))) : undefined;
  const ranges = slices(quotes).map((s) => {
    const T = s.expiry;
    const q0 = quotes[s.idx[0]!]!;
    const r = rates ? { ...rates, sqrtV } : undefined;
    const { c1, c2, c4 } = r ? h1hwCumulants(p, T, r) : hestonCumulants(p, T);
    const half = defaultTruncationL(c2, c4, 1e-10) * Math.sqrt(c2 + Math.sqrt(Math.abs(c4)));
    const lo = c1 - half;
    const res = cosCallPricesAdaptive({
      logChfGrid: r ? h1hwLogChfGrid(p, T, r) : (u, re, im) => hestonExponentGrid(p, T, u, re, im),
      forward: q0.forward,
      df: q0.df,
      strikes: s.idx.map((i) => quotes[i]!.strike),
      lo,
      width: 2 * half,
      tol: 1e-9 * q0.df * q0.forward,
    });
    s.idx.forEach((i, k) => {
      const q = quotes[i]!;
      out[i] = q.isCall ? res.prices[k]! : res.prices[k]! - q.df * (q.forward - q.strike);
    });
    return { expiry: T, idx: s.idx, lo, width: 2 * half, terms: res.terms };
  });
  return { prices: out, ranges };
}

/** Slices re-prepared on the check's model ranges, with a quarter more terms than the check needed. */
function modelRangeSlices(quotes: VolQuote[], check: ModelRangeCheck): SliceOfQuotes[] {
  return check.ranges.map((r) => {
    const q0 = quotes[r.idx[0]!]!;
    return {
      expiry: r.expiry,
      idx: r.idx,
      lo: r.lo,
      width: r.width,
      slice: prepareCosSlice({
        forward: q0.forward,
        df: q0.df,
        strikes: r.idx.map((i) => quotes[i]!.strike),
        lo: r.lo,
        width: r.width,
        terms: Math.ceil(1.25 * r.terms) + 8,
      }),
    };
  });
}

/**
 * max |a − b|/scale over the quotes whose price difference exceeds {@link PRICER_CHECK_PRICE} × df·F, in vol points
 * (0 when none does).
 */
function disagreementPoints(a: number[], b: number[], scale: number[], quotes: VolQuote[]): number {
  let worst = 0;
  for (let i = 0; i < a.length; i++) {
    const q = quotes[i]!;
    const diff = Math.abs(a[i]! - b[i]!);
    if (!(diff <= PRICER_CHECK_PRICE * q.df * q.forward)) worst = Math.max(worst, diff / scale[i]!);
  }
  return Number.isFinite(worst) ? worst * 100 : Infinity;
}

/** Checks the quotes can identify the parameters; throws with the field and the fix otherwise. */
function checkQuotes(input: HestonCalibrationInput, quotes: VolQuote[], nFree: number): void {
  const expiries = new Set(quotes.map((q) => q.expiry));
  const issues: FieldIssue[] = [];
  if (quotes.length < nFree + 1)
    issues.push(
      issue(
        'E_TOO_FEW_QUOTES',
        `equities.${input.name}.vols`,
        `must hold more quotes than the ${nFree} free Heston parameters`,
        quotes.length,
        'add quotes or fix some parameters',
      ),
    );
  if (expiries.size < 2 && (input.fixed?.kappa === undefined || input.fixed?.theta === undefined))
    issues.push(
      issue(
        'E_TOO_FEW_EXPIRIES',
        `equities.${input.name}.vols.expiries`,
        'must hold at least 2 expiries to identify κ and θ',
        [...expiries],
        'add an expiry or fix kappa and theta',
      ),
    );
  throwIfErrors(issues, 'E_TOO_FEW_QUOTES');
}

/** Default starts: the first from the short and long ATM vols, then three spread over the plausible region. */
export function defaultHestonStarts(quotes: VolQuote[]): HestonParams[] {
  const byT = slices(quotes);
  const atm = (s: { idx: number[] }) => {
    let best = quotes[s.idx[0]!]!;
    for (const i of s.idx)
      if (Math.abs(log(quotes[i]!.strike / quotes[i]!.forward)) < Math.abs(log(best.strike / best.forward)))
        best = quotes[i]!;
    return best.vol;
  };
  const vShort = pow(atm(byT[0]!), 2);
  const vLong = pow(atm(byT[byT.length - 1]!), 2);
  return [
    { v0: vShort, kappa: 1.5, theta: vLong, sigma: 0.5, rho: -0.6 },
    { v0: vShort, kappa: 3, theta: vLong, sigma: 0.9, rho: -0.4 },
    { v0: 0.8 * vShort, kappa: 0.7, theta: 1.2 * vLong, sigma: 0.35, rho: -0.8 },
    { v0: vLong, kappa: 2, theta: vShort, sigma: 1.2, rho: -0.7 },
  ];
}

/** Fits Heston (or H1-HW when `rates` is given) to the quotes; see the module comment for the residuals. */
export function calibrateHeston(input: HestonCalibrationInput): HestonCalibration {
  const t0 = nowMs();
  const field = `equities.${input.name}`;
  if (!input.quotes)
    throwIfErrors(gridArbitrageIssues(input.equity, input.curve, field), 'E_STATIC_ARBITRAGE');
  const quotes = input.quotes ?? gridQuotes(input.equity, input.curve, field);
  const fixed = input.fixed ?? {};
  const nFree = HESTON_NAMES.filter((n) => fixed[n] === undefined).length;
  checkQuotes(input, quotes, nFree);
  const shift = input.targetShift;
  // Targets: market prices at (possibly shifted) vols; vegas of the market quotes as the residual scale.
  const target = quotes.map((q, i) => (shift ? blackPriceOf(q, q.vol + shift[i]!) : q.price));
  const vegaFloor = (q: VolQuote) => Math.max(q.vega, 1e-4 * q.df * q.forward * Math.sqrt(q.expiry));
  const scale = quotes.map(vegaFloor);
  const targetVol = quotes.map((q, i) => q.vol + (shift ? shift[i]! : 0));
  const fastSlices = preparedSlices(quotes, input.terms ?? 192);
  const residualsFromPrices = (m: number[]) => {
    if (input.residuals === 'implied-vol')
      return m.map((x, i) => {
        const q = quotes[i]!;
        const iv = blackImpliedVol({ ...q, price: x });
        // Outside the no-arbitrage bounds: fall back to the first-order error so the fit can move back.
        return Number.isFinite(iv) ? iv - targetVol[i]! : (x - target[i]!) / scale[i]!;
      });
    return m.map((x, i) => (x - target[i]!) / scale[i]!);
  };
  const freeNames = HESTON_NAMES.filter((n) => fixed[n] === undefined);
  const freeIdx = freeNames.map((n) => HESTON_NAMES.indexOf(n));
  /**
   * Residuals, and for plain Heston their analytic Jacobian: ∂r_i/∂p = (∂price_i/∂p)/vega_i (vega of the market
   * quote for `vega-price`, of the model's implied vol for `implied-vol`, by the implicit function theorem), from the
   * analytic gradient of the characteristic function on the same COS slices. The last Jacobian is kept (the report's
   * standard errors ask for it again at the solution). Without it (the default, and always under rates) the
   * optimiser differences the residuals. Either way it updates the Jacobian by Broyden steps between full ones.
   */
  const problemOn = (list: SliceOfQuotes[]) => {
    if (input.rates || input.jacobian !== 'analytic')
      return {
        residuals: (p: Readonly<Record<string, number>>) =>
          residualsFromPrices(pricesOn(p as unknown as HestonParams, quotes, list, input.rates)),
      };
    let lastKey: number[] = [];
    let last: number[][] | undefined;
    const jacobian = (p: Readonly<Record<string, number>>) => {
      const key = HESTON_NAMES.map((n) => p[n]!);
      if (last && key.every((x, i) => x === lastKey[i])) return last;
      const { prices, gradient } = pricesAndGradientOn(p as unknown as HestonParams, quotes, list);
      const J = prices.map((x, i) => {
        const q = quotes[i]!;
        let v = scale[i]!;
        if (input.residuals === 'implied-vol') {
          const iv = blackImpliedVol({ ...q, price: x });
          if (Number.isFinite(iv)) v = Math.max(blackVega({ ...q, vol: iv }), 1e-300);
        }
        return freeIdx.map((k) => gradient[i]![k]! / v);
      });
      lastKey = key;
      last = J;
      return J;
    };
    return {
      residuals: (p: Readonly<Record<string, number>>) =>
        residualsFromPrices(pricesOn(p as unknown as HestonParams, quotes, list)),
      jacobian,
    };
  };
  const starts = input.starts ?? defaultHestonStarts(quotes);
  const runFit = (s: HestonParams, list: SliceOfQuotes[]): FitReport => {
    const params: FitParameter[] = HESTON_NAMES.map((n) => ({
      name: n,
      initial: fixed[n] ?? s[n],
      lower: HESTON_BOUNDS[n][0],
      upper: HESTON_BOUNDS[n][1],
      fixed: fixed[n] !== undefined,
    }));
    return fitLeastSquares(
      {
        parameters: params,
        ...problemOn(list),
        weights: input.weights,
        constraints: [
          {
            name: 'Feller 2κθ − σ² ≥ 0',
            mode: 'report',
            g: (p) => 2 * p.kappa! * p.theta! - p.sigma! * p.sigma!,
          },
        ],
      },
      {
        maxEvaluations: input.maxEvaluations ?? 300,
        costTol: 1e-10,
        jacobianUpdate: 'broyden',
      },
    );
  };
  const tol = input.toleranceVolPoints ?? 0.5;
  const stopRule = input.startRule ?? 'good-fit-stops';
  // RMSE of the raw residuals is in vol (decimals): a tenth of the tolerance in vol points is tol/1000.
  const multi = fitFromStarts(starts, (s) => runFit(s, fastSlices), stopRule === 'all' ? 0 : tol / 1000);
  const runs = multi.runs;
  runs.sort((a, b) => cost(a.fit) - cost(b.fit));
  const best = runs[0]!;
  let bestFit = best.fit;
  let p = toHeston(bestFit.parameters);
  let model = pricesOn(p, quotes, fastSlices, input.rates);
  // Pricer check: the fast slices' ranges come from the market vols; reprice on the fitted model's own range.
  const check = modelRangeCheck(p, quotes, input.rates);
  const first = disagreementPoints(model, check.prices, scale, quotes);
  const pricer: HestonPricerCheck = {
    residualPricer: 'market-range',
    disagreementVolPoints: first,
    finalDisagreementVolPoints: first,
    toleranceVolPoints: PRICER_CHECK_VOL_POINTS,
    refitted: false,
  };
  // At most two refits: each from the point found, on slices re-prepared on that point's own ranges.
  let last = check;
  for (let round = 0; round < 2 && !(pricer.finalDisagreementVolPoints <= PRICER_CHECK_VOL_POINTS); round++) {
    const modelSlices = modelRangeSlices(quotes, last);
    bestFit = runFit(p, modelSlices);
    p = toHeston(bestFit.parameters);
    model = pricesOn(p, quotes, modelSlices, input.rates);
    pricer.residualPricer = 'model-range';
    pricer.refitted = true;
    last = modelRangeCheck(p, quotes, input.rates);
    pricer.finalDisagreementVolPoints = disagreementPoints(model, last.prices, scale, quotes);
  }
  const rows: VanillaFitRow[] = quotes.map((q, i) => {
    const tvol = shift ? q.vol + shift[i]! : q.vol;
    const implied = blackImpliedVol({ ...q, price: model[i]! });
    const priceError = model[i]! - target[i]!;
    // A model price outside the no-arbitrage bounds (e.g. a far wing the model cannot reach) has no implied vol:
    // report the first-order vol from the price error and its vega floor, the residual the optimiser used.
    const fromPrice = !Number.isFinite(implied);
    const mv = fromPrice ? tvol + priceError / scale[i]! : implied;
    return {
      expiry: q.expiry,
      strike: q.strike,
      isCall: q.isCall,
      marketVol: q.vol,
      modelVol: mv,
      marketPrice: q.price,
      modelPrice: model[i]!,
      priceError,
      volErrorPoints: (mv - tvol) * 100,
      weight: input.weights?.[i] ?? 1,
      field: q.field,
      ...(fromPrice ? { volFromPrice: true } : {}),
    };
  });
  const volErr = rows.map((r) => r.volErrorPoints);
  const rmseVolPoints = Math.sqrt(volErr.reduce((s, x) => s + x * x, 0) / volErr.length);
  const maxAbsVolPoints = Math.max(...volErr.map(Math.abs));
  const good = runs.filter((r) => r.fit.converged && cost(r.fit) <= 4 * cost(best.fit) + 1e-14);
  const spread: Record<string, { min: number; max: number }> = {};
  for (const n of HESTON_NAMES) {
    const vals = (good.length ? good : [best]).map((r) => r.fit.parameters[n]!);
    spread[n] = { min: Math.min(...vals), max: Math.max(...vals) };
  }
  const warnings = [...bestFit.warnings];
  const noVol = rows.filter((r) => r.volFromPrice);
  if (noVol.length)
    warnings.push(
      issue(
        'W_NO_IMPLIED_VOL',
        `${field}.vols`,
        `the fitted model's price must lie inside the Black–Scholes bounds to have an implied vol; ${noVol.length} quote(s) do not (vol error shown to first order from the price error)`,
        noVol.map((r) => `K=${r.strike} T=${r.expiry}`).join(', '),
        'the model cannot reach these quotes: check them, or accept and report the residuals',
        'warning',
      ),
    );
  if (!(pricer.finalDisagreementVolPoints <= PRICER_CHECK_VOL_POINTS))
    warnings.push(
      issue(
        'W_PRICER_RANGE',
        `${field}.vols`,
        `the fit's COS pricer must agree with the fitted model's own truncation range within ${PRICER_CHECK_VOL_POINTS} vol points`,
        Number(pricer.finalDisagreementVolPoints.toPrecision(3)),
        'the fitted model has tails the quotes do not constrain: check the quotes or fix some parameters',
        'warning',
      ),
    );
  if (rmseVolPoints > tol)
    warnings.push(
      issue(
        'W_FIT_TOLERANCE',
        `${field}.vols`,
        `fit RMSE must be ≤ ${tol} vol points`,
        Number(rmseVolPoints.toFixed(3)),
        'the model cannot match these quotes closely: check the quotes, or accept and report the residuals',
        'warning',
      ),
    );
  const ratio = (2 * p.kappa * p.theta) / (p.sigma * p.sigma);
  return {
    params: p,
    fit: bestFit,
    pricer,
    rows,
    rmseVolPoints,
    maxAbsVolPoints,
    feller: { ratio, satisfied: ratio >= 1 },
    starts: runs.map((r) => ({
      start: r.start,
      params: toHeston(r.fit.parameters),
      rmse: r.fit.rmse,
      converged: r.fit.converged,
    })),
    spread,
    skippedStarts: {
      starts: multi.skipped,
      rule:
        stopRule === 'all'
          ? 'every start runs'
          : `starts after the first converged fit with RMSE ≤ ${(tol / 10).toPrecision(3)} vol points (a tenth of the tolerance) are skipped: another start could not change acceptance; the parameter spread then covers only the starts run`,
    },
    ok: bestFit.converged && rmseVolPoints <= tol,
    warnings,
    seconds: (nowMs() - t0) / 1000,
  };
}

function cost(f: FitReport): number {
  return f.weightedResiduals.reduce((s, x) => s + x * x, 0);
}

function toHeston(r: Record<string, number>): HestonParams {
  return { v0: r.v0!, kappa: r.kappa!, theta: r.theta!, sigma: r.sigma!, rho: r.rho! };
}

/** Discounted Black price of the quote's contract at another vol (the shifted target of the refit). */
function blackPriceOf(q: VolQuote, vol: number): number {
  if (!(vol > 0))
    throw new EngineError('E_SHIFTED_VOL', `shifted target vol for ${q.field} must be > 0 (got ${vol})`);
  return blackPrice({ ...q, vol });
}
