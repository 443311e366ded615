/**
 * Calibrated model variants of the ladder (DESIGN steps 4–5): the base model plus every subset of the candidate
 * factors, each a valid VariantSpec calibrated to the same market instruments.
 *
 * - Black–Scholes: piecewise-constant forward vols reproducing the spot-ATM implied total variance at each grid
 *   expiry up to the deal's last date (σ²_i (T_i − T_{i−1}) = w_i − w_{i−1}, w = σ_imp² T; common practice).
 * - Black–Scholes under Hull–White (fair): the same quotes refitted in closed form. Under the T-forward measure
 *   Var ln F(T) = ∫ σ_S² + 2ρ σ_S σ_r B(t,T) + σ_r² B(t,T)² dt (Rabinovitch 1989; Brigo & Mercurio 2006, Ch. 13–14),
 *   bootstrapped expiry by expiry with a one-dimensional root (Brent) so each quote's variance is matched.
 * - Heston: fitted to the grid quotes up to the deal's last date by COS (Fang & Oosterlee 2008), through the
 *   calibration layer; under Hull–White (fair) by the H1-HW characteristic function (Grzelak & Oosterlee 2011),
 *   an approximation, labelled as such.
 * - Hull–White: a and σ fitted to the currency's caplet vols (normal → Bachelier, lognormal → Black), θ(t) from the
 *   curve; caplet prices in closed form (Brigo & Mercurio 2006, eq. 3.41).
 * - Naive mode: the deterministic-rate equity fit is kept and the rate factor is added without refitting
 *   (labelled: it measures miscalibration as well as the factor).
 *
 * This is the only assembly of the ladder: the study simulates it and the `calibrate` command prints it. The request
 * builders below (`ladderFactors`, `studyLadderRequest`, `snapshotLadderBasis`) give the request a study of a deal
 * would make, or one from a snapshot alone; the fit reports behind the variants come back in `reports`.
 */
import { fail } from '../errors.ts';
import type { DealAnalysis } from '../deal/types.ts';
import type { EquityQuote, MarketSnapshot } from '../market/types.ts';
import type {
  EquityDynamics,
  EquitySpec,
  FxSpec,
  HestonParams,
  HullWhiteParams,
  RateSpec,
  VariantSpec,
} from '../simulation/types.ts';
import { makeCurve } from '../market/curve.ts';
import { isPsd, nearestCorrelation } from '../math/linalg.ts';
import { bsPrice, black76 } from '../models/blackScholes.ts';
import { bachelierPrice } from '../models/bachelier.ts';
import {
  calibrateHeston,
  hestonModelPrices,
  type HestonCalibration,
} from '../calibration/hestonCalibration.ts';
import {
  bsForwardVols,
  bsHullWhiteRefit,
  bsTargetsFromGrid,
} from '../calibration/blackScholesCalibration.ts';
import { calibrateHullWhite, type HullWhiteCalibration } from '../calibration/hullWhiteCalibration.ts';
import { refitHestonUnderRates, type HestonRefit } from '../calibration/hestonRefit.ts';
import { gridQuotes, type VolQuote } from '../calibration/volGrid.ts';
import type { CalibrationMode, FitRow, LadderVariant, StudySettings } from './types.ts';
import { applyRules, candidateFactors, requiredFactors, FACTOR_IDS, type FactorId } from './rules.ts';
import { log } from '../math/detMath.ts';

const now = () => (typeof performance !== 'undefined' ? performance.now() : Date.now());

/** A fitted caplet: fixing at `expiry`, paid at `expiry + tenor`, price per unit notional. */
export interface CapletQuote {
  currency: string;
  expiry: number;
  tenor: number;
  strike: number;
  market: number;
  vol: number;
}

/**
 * What the ladder needs to know of a deal: its payment currency, every currency involved, its equities and its last
 * date (years). A deal analysis is one; `snapshotLadderBasis` builds one from a snapshot alone.
 */
export type LadderBasis = Pick<DealAnalysis, 'currency' | 'currencies' | 'equities' | 'lastTime'>;

/** What the ladder is calibrated from. */
export interface LadderRequest {
  snapshot: MarketSnapshot;
  analysis: LadderBasis;
  /** Candidate factors in bit order (bit i of a mask = candidates[i]). */
  candidates: FactorId[];
  /** Factors present in every variant. */
  required: FactorId[];
  mode: CalibrationMode;
  scheme: 'qe' | 'euler';
  /** Absolute shift of every equity implied vol (vega scenarios); default 0. */
  volShift?: number;
  /** Warm starts for Heston, keyed by equity market name (vega scenarios recalibrate from the fitted parameters). */
  warmStart?: Record<string, HestonParams>;
  /** Overrides of correlations, keyed `A|B` (sweeps). */
  correlationOverride?: Record<string, number>;
  /** Absolute strike of the Black–Scholes targets per equity (default: the ATM forward at each expiry). */
  bsStrikes?: Record<string, number>;
  /** Correct the H1-HW Heston refit by Monte Carlo of the full model (own seed, never the study's paths). */
  hestonMcRefit?: { paths: number; seed: string; maxStep: number };
}

/** How one equity was fitted inside one variant. */
export interface EquityFitReport {
  /**
   * bs: forward vols; bs-hw: forward vols refitted under Hull–White; heston: COS fit under deterministic rates (also
   * the naive variants' equity under stochastic rates); h1-hw: refit by the H1-HW characteristic function;
   * h1-hw+mc: that refit corrected by Monte Carlo of the full model.
   */
  model: 'bs' | 'bs-hw' | 'heston' | 'h1-hw' | 'h1-hw+mc';
  /** The Heston fit (heston, h1-hw). */
  heston?: HestonCalibration;
  /** The Monte Carlo-corrected refit (h1-hw+mc). */
  refit?: HestonRefit;
  /** Converged and within its tolerance. */
  ok: boolean;
}

/** The fit reports behind the variants (read by the calibrate command and the stability report; not saved in studies). */
export interface LadderFitReports {
  /** Hull–White fit per currency with a stochastic rate somewhere in the ladder. */
  hullWhite: Record<string, HullWhiteCalibration>;
  /** Heston fit per equity under deterministic rates (only when some variant has it). */
  heston: Record<string, HestonCalibration>;
  /** Per variant id: each equity's fit, and whether every fit of the variant (Hull–White included) is accepted. */
  variants: Record<string, { equities: Record<string, EquityFitReport>; ok: boolean }>;
}

/** The calibrated ladder. */
export interface CalibratedLadder {
  variants: LadderVariant[];
  /** Fitted Hull–White parameters per currency (only currencies whose rate is stochastic somewhere). */
  hullWhite: Record<
    string,
    {
      params: HullWhiteParams;
      rmseBp: number;
      rows: FitRow[];
      seconds: number;
      warnings: string[];
      caplets: CapletQuote[];
    }
  >;
  /** Heston parameters per equity under deterministic rates (for warm starts and stability). */
  heston: Record<string, HestonParams>;
  reports: LadderFitReports;
  warnings: string[];
  seconds: number;
}

/** The factors of a mask. */
export function maskFactors(mask: number, candidates: FactorId[], required: FactorId[]): FactorId[] {
  const set = new Set<FactorId>(required);
  candidates.forEach((f, i) => {
    if (mask & (1 << i)) set.add(f);
  });
  return FACTOR_IDS.filter((f) => set.has(f));
}

/** Short id of a factor set, e.g. `bs`, `heston+hw(DOM)`. */
export function variantId(factors: FactorId[], foreign: string[], domestic: string): string {
  const parts = [factors.includes('stochVol') ? 'heston' : 'bs'];
  if (factors.includes('domesticRate')) parts.push(`hw(${domestic})`);
  if (factors.includes('foreignRate')) parts.push(`hw(${foreign.join(',')})`);
  return parts.join('+');
}

function variantLabel(factors: FactorId[], foreign: string[], domestic: string): string {
  const eq = factors.includes('stochVol') ? 'Heston' : 'Black–Scholes';
  const r: string[] = [];
  if (factors.includes('domesticRate')) r.push(`Hull–White ${domestic}`);
  if (factors.includes('foreignRate')) r.push(`Hull–White ${foreign.join('/')}`);
  return r.length ? `${eq} + ${r.join(' + ')}` : `${eq}, deterministic rates`;
}

function corrOf(s: MarketSnapshot, a: string, b: string, override?: Record<string, number>): number {
  const o = override?.[`${a}|${b}`] ?? override?.[`${b}|${a}`];
  if (o !== undefined) return o;
  const i = s.correlation.names.indexOf(a);
  const j = s.correlation.names.indexOf(b);
  return i >= 0 && j >= 0 ? (s.correlation.matrix[i]?.[j] ?? 0) : 0;
}

function shiftedEquity(eq: EquityQuote, shift: number): EquityQuote {
  if (!shift) return eq;
  return {
    ...eq,
    vols: { ...eq.vols, vols: eq.vols.vols.map((row) => row.map((v) => Math.max(1e-4, v + shift))) },
  };
}

/** Grid expiries used to calibrate the equities: every expiry up to the deal's last date, plus the first beyond. */
export function calibrationExpiries(expiries: number[], lastTime: number): number[] {
  const out = expiries.filter((t) => t <= lastTime + 1e-9);
  const beyond = expiries.find((t) => t > lastTime + 1e-9);
  if (beyond !== undefined) out.push(beyond);
  return out.length ? out : expiries.slice(0, 1);
}

/** Black–Scholes forward vols to the targets (deterministic rates) or their fair refit under Hull–White. */
function fitBs(
  name: string,
  eq: EquityQuote,
  curveSpec: MarketSnapshot['curves'][string],
  expiries: number[],
  strike: number | undefined,
  rates: { hw: HullWhiteParams; rho: number } | null,
): { dynamics: EquityDynamics & { kind: 'bs' }; rows: FitRow[]; seconds: number } {
  const curve = makeCurve(curveSpec, `market.curves.${eq.currency}`);
  const targets = bsTargetsFromGrid(eq, curve, {
    expiries,
    ...(strike !== undefined ? { strikes: strike } : {}),
  });
  const field = `market.equities.${name}.vols`;
  const cal = rates
    ? bsHullWhiteRefit({
        targets,
        hw: rates.hw,
        rhoSR: rates.rho,
        spot: eq.spot,
        divYield: eq.divYield,
        curve,
        field,
      })
    : bsForwardVols(targets, field);
  const rows: FitRow[] = targets.map((t, i) => {
    const err = cal.repricingErrorPoints[i]! / 100;
    const r = -log(curve.df(t.expiry)) / t.expiry;
    const px = (vol: number) =>
      bsPrice({ type: 'call', S: eq.spot, K: t.strike, T: t.expiry, r, q: eq.divYield, vol });
    return {
      instrument: `${name} call K=${Math.round(t.strike * 100) / 100} T=${t.expiry}`,
      expiry: t.expiry,
      marketVol: t.vol,
      modelVol: t.vol + err,
      priceError: px(t.vol + err) - px(t.vol),
      mcError: null,
    };
  });
  return { dynamics: cal.dynamics, rows, seconds: cal.seconds };
}

function fitHeston(
  name: string,
  eq: EquityQuote,
  curveSpec: MarketSnapshot['curves'][string],
  expiries: number[],
  rates: { hw: HullWhiteParams; rho: number } | null,
  warm: HestonParams | undefined,
  mcRefit?: { paths: number; seed: string; maxStep: number },
): {
  params: HestonParams;
  rows: FitRow[];
  seconds: number;
  feller: number;
  warnings: string[];
  report: EquityFitReport;
} {
  const curve = makeCurve(curveSpec, `market.curves.${eq.currency}`);
  const keep = new Set(expiries);
  const quotes: VolQuote[] = gridQuotes(eq, curve, `market.equities.${name}`).filter((q) =>
    keep.has(q.expiry),
  );
  if (rates && mcRefit) {
    // H1-HW refit corrected by Monte Carlo of the full Heston–Hull–White model (calibration layer; its own seed).
    const r = refitHestonUnderRates({
      name,
      equity: eq,
      curve,
      curveSpec,
      currency: eq.currency,
      hw: rates.hw,
      rhoSR: rates.rho,
      quotes,
      ...(warm ? { start: warm } : {}),
      monteCarlo: { paths: mcRefit.paths, seed: mcRefit.seed, maxStep: mcRefit.maxStep },
    });
    const a = r.analytic;
    const rows: FitRow[] = a.rows.map((x) => ({
      instrument: `${name} K=${Math.round(x.strike * 100) / 100} T=${x.expiry}`,
      expiry: x.expiry,
      marketVol: x.marketVol,
      modelVol: x.modelVol,
      priceError: x.modelPrice - x.marketPrice,
      mcError: null,
    }));
    const warnings = r.warnings.map((w) => w.message);
    if (r.status === 'not-met')
      warnings.push(`Monte Carlo-corrected Heston refit of ${name} stopped without meeting its tolerance`);
    const ratio = (2 * r.params.kappa * r.params.theta) / (r.params.sigma * r.params.sigma);
    const ok = a.fit.converged && r.status !== 'not-met';
    return {
      params: r.params,
      rows,
      seconds: r.seconds,
      feller: ratio,
      warnings,
      report: { model: 'h1-hw+mc', refit: r, ok },
    };
  }
  const res = calibrateHeston({
    name,
    equity: eq,
    curve,
    quotes,
    ...(rates ? { rates: { hw: rates.hw, rhoSR: rates.rho } } : {}),
    ...(warm ? { starts: [warm] } : {}),
  });
  const rows: FitRow[] = res.rows.map((r) => ({
    instrument: `${name} ${r.strike !== undefined ? `K=${Math.round(r.strike * 100) / 100}` : ''} T=${r.expiry}`,
    expiry: r.expiry,
    marketVol: r.marketVol,
    modelVol: r.modelVol,
    priceError: r.modelPrice - r.marketPrice,
    mcError: null,
  }));
  const warnings = res.warnings.map((w) => w.message);
  if (!res.ok)
    warnings.push(
      `Heston fit of ${name} did not meet its tolerance (RMSE ${res.rmseVolPoints.toFixed(3)} vol points)`,
    );
  return {
    params: res.params,
    rows,
    seconds: res.seconds,
    feller: res.feller.ratio,
    warnings,
    report: { model: rates ? 'h1-hw' : 'heston', heston: res, ok: res.ok },
  };
}

/** Hull–White a, σ fitted to the rate vols of one currency whose quotes end by the deal's last date (at least two). */
export function fitHullWhite(
  snapshot: MarketSnapshot,
  ccy: string,
  lastTime: number,
): {
  params: HullWhiteParams;
  rmseBp: number;
  rows: FitRow[];
  seconds: number;
  warnings: string[];
  /** The caplets fitted (for the Monte Carlo repricing on the study's paths); empty for swaptions. */
  caplets: CapletQuote[];
  /** The calibration layer's report of the fit. */
  report: HullWhiteCalibration;
} {
  const spec = snapshot.rateVols?.[ccy];
  if (!spec)
    fail(
      'E_NO_RATE_VOLS',
      `market.rateVols.${ccy}`,
      'must give caplet or swaption vols to calibrate the stochastic rate',
      undefined,
      `add rateVols.${ccy} to the market snapshot, or mark the ${ccy} rate as not needed`,
    );
  const curveSpec = snapshot.curves[ccy];
  if (!curveSpec) fail('E_NO_CURVE', `market.curves.${ccy}`, 'must exist', undefined);
  const curve = makeCurve(curveSpec, `market.curves.${ccy}`);
  const sorted = spec.quotes.slice().sort((a, b) => a.expiry - b.expiry);
  let quotes = sorted.filter((q) => q.expiry + q.tenor <= lastTime + 1e-9);
  if (quotes.length < 3) quotes = sorted.slice(0, Math.min(3, sorted.length));
  const cal = calibrateHullWhite({ currency: ccy, curve, rateVols: { ...spec, quotes } });
  const rows: FitRow[] = cal.rows.map((r) => ({
    instrument: `${ccy} ${r.instrument} ${r.expiry}y×${r.tenor}y`,
    marketVol: r.marketVol,
    modelVol: r.modelVol,
    priceError: r.priceError,
    mcError: null,
  }));
  const warnings = cal.warnings.map((w) => w.message);
  if (!cal.ok)
    warnings.push(
      `Hull–White fit of ${ccy} did not meet its tolerance (RMSE ${cal.rmseVol.toFixed(2)} ${cal.volUnit})`,
    );
  const caplets: CapletQuote[] =
    spec.instrument !== 'caplet'
      ? []
      : cal.rows.map((r) => {
          const T1 = r.expiry;
          const T2 = r.expiry + r.tenor;
          const P2 = curve.df(T2);
          const F = (curve.df(T1) / P2 - 1) / r.tenor;
          const annuity = r.tenor * P2;
          // Market caplet price per unit notional: annuity × Bachelier (normal quotes) or Black (lognormal).
          const market =
            spec.type === 'normal'
              ? annuity * bachelierPrice({ type: 'call', F, K: r.strike, T: T1, vol: r.marketVol })
              : r.tenor * black76({ type: 'call', F, K: r.strike, T: T1, df: P2, vol: r.marketVol });
          return { currency: ccy, expiry: T1, tenor: r.tenor, strike: r.strike, market, vol: r.marketVol };
        });
  return {
    params: cal.params,
    rmseBp: cal.rmseVol,
    rows,
    seconds: cal.seconds,
    warnings,
    caplets,
    report: cal,
  };
}

/** Builds and calibrates every variant of the ladder (2^k masks). */
export function calibrateLadder(req: LadderRequest): CalibratedLadder {
  const t0 = now();
  const { snapshot: s, analysis: a, candidates, required } = req;
  const dom = a.currency;
  const warnings: string[] = [];
  if (!s.curves[dom])
    fail(
      'E_NO_CURVE',
      `market.curves.${dom}`,
      `must give the curve of the deal currency ${dom}`,
      Object.keys(s.curves),
    );
  const foreign = a.currencies.filter((c) => c !== dom);
  for (const c of foreign)
    if (!s.curves[c])
      fail(
        'E_NO_CURVE',
        `market.curves.${c}`,
        `must give the curve of ${c}, a currency of the deal`,
        Object.keys(s.curves),
      );
  const equities = a.equities.map((e) => {
    const q = s.equities[e.marketName];
    if (!q)
      fail(
        'E_UNKNOWN_UNDERLYING',
        `deal.underlyings.${e.id}`,
        `must name an equity of the market (market has ${Object.keys(s.equities).join(', ') || 'none'})`,
        e.marketName,
        'add it to the market snapshot or correct the name',
      );
    return { ...e, quote: shiftedEquity(q, req.volShift ?? 0) };
  });
  const fxs: FxSpec[] = foreign.map((c) => {
    const entry = Object.entries(s.fx ?? {}).find(([, x]) => x.foreign === c && x.domestic === dom);
    if (!entry)
      fail(
        'E_NO_FX',
        'market.fx',
        `must quote ${dom} per ${c} (the deal involves ${c})`,
        Object.keys(s.fx ?? {}),
        `add an FX entry with foreign ${c} and domestic ${dom}`,
      );
    return { name: entry[0], foreign: c, spot: entry[1].spot, vol: entry[1].vol };
  });

  // Hull–White per currency, fitted once.
  const hwNeeded = new Set<string>();
  const allFactors = [...candidates, ...required];
  if (allFactors.includes('domesticRate')) hwNeeded.add(dom);
  if (allFactors.includes('foreignRate')) foreign.forEach((c) => hwNeeded.add(c));
  const hullWhite: CalibratedLadder['hullWhite'] = {};
  const reports: LadderFitReports = { hullWhite: {}, heston: {}, variants: {} };
  for (const c of hwNeeded) {
    const { report, ...fitted } = fitHullWhite(s, c, a.lastTime);
    hullWhite[c] = fitted;
    reports.hullWhite[c] = report;
    warnings.push(...hullWhite[c]!.warnings);
  }

  const cache = new Map<string, unknown>();
  const memo = <T>(key: string, f: () => T): { value: T; fresh: boolean } => {
    if (cache.has(key)) return { value: cache.get(key) as T, fresh: false };
    const v = f();
    cache.set(key, v);
    return { value: v, fresh: true };
  };
  const hestonDet: Record<string, HestonParams> = {};

  const variants: LadderVariant[] = [];
  const nMasks = 1 << candidates.length;
  for (let mask = 0; mask < nMasks; mask++) {
    const factors = maskFactors(mask, candidates, required);
    const stochRate = (ccy: string) =>
      (ccy === dom && factors.includes('domesticRate')) || (ccy !== dom && factors.includes('foreignRate'));
    const rates: Record<string, RateSpec> = {};
    for (const c of [dom, ...foreign]) {
      rates[c] = { curve: s.curves[c]! };
      if (stochRate(c)) rates[c]!.hw = hullWhite[c]!.params;
    }
    let seconds = 0;
    const fit: FitRow[] = [];
    const vWarnings: string[] = [];
    const feller: Record<string, number> = {};
    const eqReports: Record<string, EquityFitReport> = {};
    let cf: 'exact' | 'approximate' | 'none' = 'exact';
    const eqSpecs: EquitySpec[] = equities.map((e) => {
      const expiries = calibrationExpiries(e.quote.vols.expiries, a.lastTime);
      const hwHere = stochRate(e.currency) ? hullWhite[e.currency]!.params : null;
      const rho = corrOf(s, `eq:${e.marketName}`, `rate:${e.currency}`, req.correlationOverride);
      const refit = hwHere && req.mode === 'fair' ? { hw: hwHere, rho } : null;
      const curveSpec = s.curves[e.currency]!;
      let dynamics: EquityDynamics;
      if (factors.includes('stochVol')) {
        const r = memo(`heston|${e.marketName}|${JSON.stringify(refit)}`, () =>
          fitHeston(
            e.marketName,
            e.quote,
            curveSpec,
            expiries,
            refit,
            req.warmStart?.[e.marketName] ?? (refit ? hestonDet[e.marketName] : undefined),
            refit ? req.hestonMcRefit : undefined,
          ),
        );
        if (r.fresh) seconds += r.value.seconds;
        if (!refit) hestonDet[e.marketName] = r.value.params;
        if (!refit && r.value.report.heston) reports.heston[e.marketName] = r.value.report.heston;
        eqReports[e.marketName] = r.value.report;
        if (refit) cf = 'approximate';
        dynamics = { kind: 'heston', ...r.value.params };
        fit.push(...r.value.rows);
        vWarnings.push(...r.value.warnings);
        feller[e.marketName] = r.value.feller;
      } else {
        const r = memo(`bs|${e.marketName}|${JSON.stringify(refit)}|${req.bsStrikes?.[e.marketName]}`, () =>
          fitBs(e.marketName, e.quote, curveSpec, expiries, req.bsStrikes?.[e.marketName], refit),
        );
        if (r.fresh) seconds += r.value.seconds;
        dynamics = r.value.dynamics;
        fit.push(...r.value.rows);
        eqReports[e.marketName] = { model: refit ? 'bs-hw' : 'bs', ok: true };
      }
      return {
        name: e.marketName,
        currency: e.currency,
        spot: e.quote.spot,
        divYield: e.quote.divYield,
        dynamics,
      };
    });
    for (const c of Object.keys(hullWhite)) if (stochRate(c)) fit.push(...hullWhite[c]!.rows);
    if (req.mode === 'naive' && factors.some((f) => f !== 'stochVol'))
      vWarnings.push('naive: the equity fit under deterministic rates is kept after adding stochastic rates');
    const names = s.correlation.names.slice();
    const matrix = s.correlation.matrix.map((row, i) =>
      row.map((v, j) => (i === j ? 1 : (corrOf(s, names[i]!, names[j]!, req.correlationOverride) ?? v))),
    );
    // A Heston equity's spot–variance correlation is its fitted ρ (the market's entry is only a starting view).
    for (const e of eqSpecs) {
      if (e.dynamics.kind !== 'heston') continue;
      const i = names.indexOf(`eq:${e.name}`);
      const j = names.indexOf(`var:${e.name}`);
      if (i >= 0 && j >= 0) {
        matrix[i]![j] = e.dynamics.rho;
        matrix[j]![i] = e.dynamics.rho;
      } else if (i >= 0) {
        names.push(`var:${e.name}`);
        matrix.forEach((row) => row.push(0));
        matrix.push(
          names.map((_, c) =>
            c === names.length - 1
              ? 1
              : c === i
                ? e.dynamics.kind === 'heston'
                  ? (e.dynamics as HestonParams).rho
                  : 0
                : 0,
          ),
        );
        matrix[i]![names.length - 1] = (e.dynamics as HestonParams).rho;
      }
    }
    // The drivers this variant uses must have a positive semi-definite correlation; otherwise stop and offer the
    // nearest valid matrix (Higham 2002), never repair it silently.
    {
      const active = [
        ...eqSpecs.map((e) => `eq:${e.name}`),
        ...eqSpecs.filter((e) => e.dynamics.kind === 'heston').map((e) => `var:${e.name}`),
        ...Object.keys(rates)
          .filter((c) => rates[c]!.hw)
          .map((c) => `rate:${c}`),
        ...fxs.map((f) => `fx:${f.name}`),
      ].filter((n) => names.includes(n));
      const sub = active.map((x) => active.map((y) => matrix[names.indexOf(x)]![names.indexOf(y)]!));
      if (!isPsd(sub)) {
        const near = nearestCorrelation(sub);
        const changes: string[] = [];
        active.forEach((x, i) =>
          active.forEach((y, j) => {
            if (j > i && Math.abs(near.matrix[i]![j]! - sub[i]![j]!) > 5e-4)
              changes.push(`${x}|${y} ${sub[i]![j]!.toFixed(3)} → ${near.matrix[i]![j]!.toFixed(3)}`);
          }),
        );
        fail(
          'E_NOT_PSD',
          `market.correlation (variant ${variantLabel(factors, foreign, dom)})`,
          'must be positive semi-definite over the drivers the variant uses (fitted Heston ρ included)',
          active,
          `the nearest valid matrix (Higham 2002) changes: ${changes.slice(0, 6).join('; ') || 'small entries only'}`,
        );
      }
    }
    const id = variantId(factors, foreign, dom) + (req.mode === 'naive' ? '~naive' : '');
    reports.variants[id] = {
      equities: eqReports,
      ok:
        Object.values(eqReports).every((r) => r.ok) &&
        Object.keys(hullWhite)
          .filter(stochRate)
          .every((c) => reports.hullWhite[c]!.ok),
    };
    const spec: VariantSpec = {
      id,
      label: variantLabel(factors, foreign, dom),
      domestic: dom,
      equities: eqSpecs,
      rates,
      fx: fxs,
      correlation: { names, matrix },
      hestonScheme: req.scheme,
    };
    // Equity vol errors only: rate rows are named `<CCY> caplet …` or `<CCY> swaption …` (their units differ).
    const eqErrs = fit
      .filter((f) => !/^\S+ (caplet|swaption) /.test(f.instrument))
      .map((f) => Math.abs(f.modelVol - f.marketVol));
    variants.push({
      id,
      label: spec.label + (req.mode === 'naive' ? ' (naive: not refitted)' : ''),
      mask,
      factors,
      role: req.mode === 'naive' ? 'naive' : 'ladder',
      spec,
      calibration: {
        characteristicFunction: cf,
        rmseVol: eqErrs.length ? Math.sqrt(eqErrs.reduce((t, x) => t + x * x, 0) / eqErrs.length) : 0,
        maxAbsVolError: eqErrs.length ? Math.max(...eqErrs) : 0,
        seconds:
          seconds +
          Object.keys(hullWhite)
            .filter(stochRate)
            .reduce((t, c) => t + hullWhite[c]!.seconds, 0),
        fit,
        warnings: vWarnings,
        feller,
      },
    });
  }
  return { variants, hullWhite, heston: hestonDet, reports, warnings, seconds: (now() - t0) / 1000 };
}

/** Heston model price of one vanilla (for closed-form checks of the study). */
export function hestonVanilla(p: HestonParams, q: VolQuote): number {
  return hestonModelPrices(p, [q])[0]!;
}

/**
 * Candidate and required factors of a deal as a study chooses them: the rules' candidates and required factors, plus
 * each extra candidate the rules call not needed (when the deal can carry it), in the order stochVol, domesticRate,
 * foreignRate.
 */
export function ladderFactors(
  analysis: DealAnalysis,
  settings: Pick<StudySettings, 'rules' | 'extraCandidates'>,
): { candidates: FactorId[]; required: FactorId[] } {
  const rules = applyRules(analysis, settings.rules);
  const candidates = candidateFactors(rules);
  const required = requiredFactors(rules);
  for (const f of settings.extraCandidates) {
    const st = rules.factors.find((x) => x.factor === f)!;
    if (st.status === 'notNeeded' && !candidates.includes(f)) {
      if (f === 'foreignRate' && analysis.currencies.length < 2) continue;
      if (f === 'stochVol' && analysis.equities.length === 0) continue;
      candidates.push(f);
    }
  }
  candidates.sort((x, y) => FACTOR_IDS.indexOf(x) - FACTOR_IDS.indexOf(y));
  return { candidates, required };
}

/** The study settings that decide how the ladder is calibrated. */
export type LadderSettings = Pick<
  StudySettings,
  | 'seed'
  | 'paths'
  | 'batchSize'
  | 'auxiliaryFraction'
  | 'maxStep'
  | 'calibration'
  | 'scheme'
  | 'calibrationStrikes'
  | 'hestonRefit'
>;

/**
 * The ladder request a study with these settings makes on `snapshot`: calibration mode, Heston scheme, the
 * Black–Scholes target strikes and, for the Monte Carlo-corrected refit, its paths (the study's auxiliary path count,
 * at least 16384), its own seed (`SEED/heston-refit`) and its largest step (at most half a month).
 */
export function studyLadderRequest(input: {
  snapshot: MarketSnapshot;
  analysis: LadderBasis;
  candidates: FactorId[];
  required: FactorId[];
  settings: LadderSettings;
}): LadderRequest {
  const S = input.settings;
  const aux = Math.max(S.batchSize, Math.round((S.paths * S.auxiliaryFraction) / S.batchSize) * S.batchSize);
  return {
    snapshot: input.snapshot,
    analysis: input.analysis,
    candidates: input.candidates,
    required: input.required,
    mode: S.calibration,
    scheme: S.scheme,
    bsStrikes: S.calibrationStrikes,
    ...(S.hestonRefit === 'monteCarlo'
      ? {
          // The full-model check needs fine steps: a one-step QE check at a short expiry is biased and the
          // correction would chase that bias (half a month keeps it well inside the tolerance).
          hestonMcRefit: {
            paths: Math.max(aux, 16384),
            seed: `${S.seed}/heston-refit`,
            maxStep: Math.min(S.maxStep, 1 / 24),
          },
        }
      : {}),
  };
}

/**
 * The ladder basis of a snapshot alone (no deal): the named equities (default every equity of the snapshot), paid in
 * the snapshot's domestic currency; the currencies are the domestic one, the equities' and any in `currencies`; the
 * last date is the latest quoted equity expiry or rate-quote end (expiry + tenor) of those currencies, so every
 * quoted expiry and rate quote is a calibration instrument.
 */
export function snapshotLadderBasis(
  snapshot: MarketSnapshot,
  options: { equities?: string[]; currencies?: string[] } = {},
): LadderBasis {
  const names = options.equities ?? Object.keys(snapshot.equities);
  const dom = snapshot.domestic;
  const equities = names.map((n) => {
    const q = snapshot.equities[n];
    if (!q)
      fail(
        'E_UNKNOWN_UNDERLYING',
        'calibration.equities',
        `must name equities of the market (it has ${Object.keys(snapshot.equities).join(', ') || 'none'})`,
        n,
        'correct the name or add the equity to the market snapshot',
      );
    return { id: n, marketName: n, currency: q.currency };
  });
  const currencies = [...new Set([dom, ...equities.map((e) => e.currency), ...(options.currencies ?? [])])];
  let lastTime = 0;
  for (const e of equities)
    for (const T of snapshot.equities[e.marketName]!.vols.expiries) lastTime = Math.max(lastTime, T);
  for (const c of currencies)
    for (const q of snapshot.rateVols?.[c]?.quotes ?? []) lastTime = Math.max(lastTime, q.expiry + q.tenor);
  return { currency: dom, currencies, equities, lastTime };
}
