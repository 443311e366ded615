/**
 * Calibration of every ladder variant to the same instruments: the base model (Black–Scholes, deterministic rates)
 * plus every subset of {stochastic vol, domestic Hull–White, foreign Hull–White}. Adding a stochastic rate refits
 * the equity so its vanillas still match: Black–Scholes in closed form (BS–HW), Heston through H1-HW, optionally
 * corrected by Monte Carlo of the full model. Each variant comes back as VariantSpec pieces (equity dynamics,
 * Hull–White parameters) with its report and its cost: whether a characteristic function exists (exact,
 * approximate, none), calibration time and fit.
 */
import type { MarketSnapshot, DiscountCurve } from '../market/types.ts';
import type { EquityDynamics, EquitySpec, HestonParams, HullWhiteParams } from '../simulation/types.ts';
import { makeCurve } from '../market/curve.ts';
import { fail, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import { calibrateHeston, type HestonCalibration } from './hestonCalibration.ts';
import { refitHestonUnderRates, type HestonRefit, type MonteCarloRefitSettings } from './hestonRefit.ts';
import { calibrateHullWhite, type HullWhiteCalibration } from './hullWhiteCalibration.ts';
import {
  bsForwardVols,
  bsHullWhiteRefit,
  type BsCalibration,
  type VolTarget,
} from './blackScholesCalibration.ts';
import { calibrateLocalVol, type LocalVolCalibration } from './localVolCalibration.ts';
import { gridArbitrageIssues, gridQuotes, gridVolAt, equityForward, type VolQuote } from './volGrid.ts';
import { calibrateFx, snapshotCorrelation, type FxCalibration } from './fxCalibration.ts';
import type { CalibrationSet } from './chooseCalibrationSet.ts';
import { nowMs } from './clock.ts';

/** Which stochastic factors a variant has. */
export interface FactorSet {
  stochVol: boolean;
  domRate: boolean;
  forRate: boolean;
}

export interface LadderCalibrationRequest {
  /** Equity market names to calibrate. */
  equities: string[];
  /** Candidate factors: the ladder is every subset of those set to true. */
  factors: FactorSet;
  /** Equity–short-rate correlation per equity (default: the snapshot's `eq:NAME|rate:CCY`). */
  rhoSR?: Record<string, number>;
  /** Instruments (default: every grid quote with weight 1, ATM-forward BS targets, every rate quote). */
  instruments?: CalibrationSet;
  /** Heston refit under rates: 'analytic' (H1-HW) or 'monte-carlo' (H1-HW corrected by the full model). */
  refit?: 'analytic' | 'monte-carlo';
  monteCarlo?: MonteCarloRefitSettings;
  /** Hull–White σ: constant (default) or piecewise constant. */
  hwMode?: 'constant' | 'piecewise';
  /** Also build the local-vol diagnostic per equity. */
  localVol?: boolean;
  /** Heston starting points per equity (warm starts). */
  warmStart?: Record<string, HestonParams>;
}

/** The report of one equity inside one variant. */
export interface EquityVariantReport {
  model: 'bs' | 'bs-hw' | 'heston' | 'h1-hw' | 'h1-hw+mc';
  rmseVolPoints: number;
  maxAbsVolPoints: number;
  seconds: number;
  heston?: HestonCalibration;
  refit?: HestonRefit;
  bs?: BsCalibration;
}

export interface VariantCalibration {
  id: string;
  factors: FactorSet;
  equities: EquitySpec[];
  /** Hull–White parameters per currency with a stochastic rate in this variant. */
  hullWhite: Record<string, HullWhiteParams>;
  reports: Record<string, EquityVariantReport>;
  cost: {
    characteristicFunction: 'exact' | 'approximate' | 'none';
    seconds: number;
    rmseVolPoints: number;
    maxAbsVolPoints: number;
  };
  ok: boolean;
  warnings: FieldIssue[];
}

export interface LadderCalibration {
  date: string;
  variants: VariantCalibration[];
  hullWhite: Record<string, HullWhiteCalibration>;
  localVol: Record<string, LocalVolCalibration>;
  /** FX pairs into the snapshot's domestic currency from each foreign equity's currency (same in every variant). */
  fx: Record<string, FxCalibration>;
  seconds: number;
  warnings: FieldIssue[];
}

/** Every subset of the candidate factors, base first. */
export function factorSubsets(c: FactorSet): FactorSet[] {
  const keys = (['stochVol', 'domRate', 'forRate'] as const).filter((k) => c[k]);
  const out: FactorSet[] = [];
  for (let mask = 0; mask < 1 << keys.length; mask++) {
    const f: FactorSet = { stochVol: false, domRate: false, forRate: false };
    keys.forEach((k, i) => (f[k] = (mask & (1 << i)) !== 0));
    out.push(f);
  }
  return out;
}

/** Short id of a variant: `bs`, `heston+hw:DOM`, ... */
export function factorSetId(f: FactorSet): string {
  return [
    f.stochVol ? 'heston' : 'bs',
    ...(f.domRate ? ['hw:dom'] : []),
    ...(f.forRate ? ['hw:for'] : []),
  ].join('+');
}

interface Shared {
  snapshot: MarketSnapshot;
  req: LadderCalibrationRequest;
  curves: Record<string, DiscountCurve>;
  hw: Record<string, HullWhiteCalibration>;
  cache: Map<string, { value: unknown; seconds: number }>;
}

function quotesFor(sh: Shared, name: string): { quotes: VolQuote[]; weights: number[] } {
  const eq = sh.snapshot.equities[name]!;
  const all = gridQuotes(eq, sh.curves[eq.currency]!, `equities.${name}`);
  const set = sh.req.instruments?.equities[name];
  if (!set) return { quotes: all, weights: all.map(() => 1) };
  const picked = set.cells
    .map((c) => ({ q: all.find((q) => q.row === c.row && q.col === c.col)!, w: c.weight }))
    .filter((x) => x.q);
  return { quotes: picked.map((x) => x.q), weights: picked.map((x) => x.w) };
}

function bsTargets(sh: Shared, name: string): VolTarget[] {
  const eq = sh.snapshot.equities[name]!;
  const curve = sh.curves[eq.currency]!;
  const set = sh.req.instruments?.equities[name];
  const pts =
    set?.bsTargets ?? eq.vols.expiries.map((T) => ({ expiry: T, strike: equityForward(eq, curve, T) }));
  return pts.map((p) => ({ ...p, vol: gridVolAt(eq, curve, p.expiry, p.strike) }));
}

function memo<T>(sh: Shared, key: string, f: () => T): { value: T; seconds: number } {
  // A cached fit still reports its own time: a variant's cost is what calibrating it alone takes.
  const hit = sh.cache.get(key);
  if (hit) return { value: hit.value as T, seconds: hit.seconds };
  const t0 = nowMs();
  const value = f();
  const seconds = (nowMs() - t0) / 1000;
  sh.cache.set(key, { value, seconds });
  return { value, seconds };
}

function calibrateWith(sh: Shared, factors: FactorSet): VariantCalibration {
  const { snapshot, req } = sh;
  const dom = snapshot.domestic;
  const warnings: FieldIssue[] = [];
  const stochRate = (ccy: string) => (ccy === dom ? factors.domRate : factors.forRate);
  const hullWhite: Record<string, HullWhiteParams> = {};
  let seconds = 0;
  for (const [c, cal] of Object.entries(sh.hw))
    if (stochRate(c)) {
      hullWhite[c] = cal.params;
      seconds += cal.seconds;
      if (!cal.ok) warnings.push(...cal.warnings);
    }
  let cf: VariantCalibration['cost']['characteristicFunction'] = 'exact';
  const reports: Record<string, EquityVariantReport> = {};
  let ok = true;
  const equities: EquitySpec[] = req.equities.map((name) => {
    const eq = snapshot.equities[name]!;
    const ccy = eq.currency;
    const curve = sh.curves[ccy]!;
    const hw = stochRate(ccy) ? sh.hw[ccy]?.params : undefined;
    if (stochRate(ccy) && !hw)
      fail(
        'E_NO_RATE_VOLS',
        `rateVols.${ccy}`,
        `must give caplet or swaption vols: ${name} is in ${ccy} and this variant makes ${ccy} rates stochastic`,
        undefined,
        `add rateVols.${ccy} or drop the ${ccy === dom ? 'domestic' : 'foreign'} rate factor`,
      );
    const rho = req.rhoSR?.[name] ?? snapshotCorrelation(snapshot, `eq:${name}`, `rate:${ccy}`);
    let dynamics: EquityDynamics;
    if (!factors.stochVol) {
      const targets = bsTargets(sh, name);
      const r = memo(sh, `bs|${name}|${hw ? JSON.stringify(hw) + rho : ''}`, () =>
        hw
          ? bsHullWhiteRefit({
              targets,
              hw,
              rhoSR: rho,
              spot: eq.spot,
              divYield: eq.divYield,
              curve,
              field: `equities.${name}.bsTargets`,
            })
          : bsForwardVols(targets, `equities.${name}.bsTargets`),
      );
      seconds += r.seconds;
      dynamics = r.value.dynamics;
      const errs = r.value.repricingErrorPoints.map(Math.abs);
      reports[name] = {
        model: hw ? 'bs-hw' : 'bs',
        rmseVolPoints: Math.sqrt(errs.reduce((s, x) => s + x * x, 0) / errs.length),
        maxAbsVolPoints: Math.max(...errs),
        seconds: r.seconds,
        bs: r.value,
      };
    } else {
      const { quotes, weights } = quotesFor(sh, name);
      const det = memo(sh, `heston|${name}`, () =>
        calibrateHeston({
          name,
          equity: eq,
          curve,
          quotes,
          weights,
          ...(req.warmStart?.[name] ? { starts: [req.warmStart[name]!] } : {}),
        }),
      );
      if (!hw) {
        seconds += det.seconds;
        dynamics = { kind: 'heston', ...det.value.params };
        reports[name] = {
          model: 'heston',
          rmseVolPoints: det.value.rmseVolPoints,
          maxAbsVolPoints: det.value.maxAbsVolPoints,
          seconds: det.seconds,
          heston: det.value,
        };
        if (!det.value.ok) ok = false;
        warnings.push(...det.value.warnings);
      } else {
        cf = 'approximate';
        const mc = req.refit === 'monte-carlo' ? req.monteCarlo : undefined;
        if (req.refit === 'monte-carlo' && !mc)
          fail(
            'E_REFIT_SETTINGS',
            'calibration.monteCarlo',
            "must give paths and seed when refit is 'monte-carlo'",
            undefined,
            'e.g. { paths: 32768, seed: "cal-1" }',
          );
        const r = memo(sh, `h1hw|${name}|${JSON.stringify(hw)}|${rho}|${mc ? JSON.stringify(mc) : ''}`, () =>
          refitHestonUnderRates({
            name,
            equity: eq,
            curve,
            curveSpec: snapshot.curves[ccy]!,
            currency: ccy,
            hw,
            rhoSR: rho,
            quotes,
            weights,
            start: det.value.params,
            ...(mc ? { monteCarlo: mc } : {}),
          }),
        );
        seconds += r.seconds;
        dynamics = { kind: 'heston', ...r.value.params };
        const a = r.value.analytic;
        const last = r.value.iterations[r.value.iterations.length - 1];
        reports[name] = {
          model: mc ? 'h1-hw+mc' : 'h1-hw',
          rmseVolPoints: last ? last.rmseErrorPoints : a.rmseVolPoints,
          maxAbsVolPoints: last ? last.maxErrorPoints : a.maxAbsVolPoints,
          seconds: r.seconds,
          refit: r.value,
        };
        if (!a.fit.converged || r.value.status === 'not-met') ok = false;
        warnings.push(...r.value.warnings);
      }
    }
    return { name, currency: ccy, spot: eq.spot, divYield: eq.divYield, dynamics };
  });
  const reps = Object.values(reports);
  const rmse = Math.sqrt(
    reps.reduce((s, r) => s + r.rmseVolPoints * r.rmseVolPoints, 0) / Math.max(reps.length, 1),
  );
  for (const c of Object.keys(hullWhite)) if (!sh.hw[c]!.ok) ok = false;
  return {
    id: factorSetId(factors),
    factors,
    equities,
    hullWhite,
    reports,
    cost: {
      characteristicFunction: cf,
      seconds,
      rmseVolPoints: rmse,
      maxAbsVolPoints: Math.max(0, ...reps.map((r) => r.maxAbsVolPoints)),
    },
    ok,
    warnings,
  };
}

function prepare(snapshot: MarketSnapshot, req: LadderCalibrationRequest): Shared {
  if (req.equities.length === 0)
    fail('E_NO_EQUITIES', 'calibration.equities', 'must name at least one equity', req.equities);
  const curves: Record<string, DiscountCurve> = {};
  for (const [c, spec] of Object.entries(snapshot.curves)) curves[c] = makeCurve(spec, `curves.${c}`);
  for (const name of req.equities) {
    const eq = snapshot.equities[name];
    if (!eq)
      fail(
        'E_UNKNOWN_UNDERLYING',
        `calibration.equities`,
        'must name equities of the snapshot',
        name,
        `snapshot has ${Object.keys(snapshot.equities).join(', ')}`,
      );
    if (!curves[eq.currency])
      fail(
        'E_NO_CURVE',
        `curves.${eq.currency}`,
        `must exist: ${name} is quoted in ${eq.currency}`,
        undefined,
      );
    // Every variant fits these quotes: static arbitrage in them is an input error, reported with the quotes.
    throwIfErrors(gridArbitrageIssues(eq, curves[eq.currency]!, `equities.${name}`), 'E_STATIC_ARBITRAGE');
  }
  const dom = snapshot.domestic;
  const ccys = new Set<string>();
  if (req.factors.domRate) ccys.add(dom);
  if (req.factors.forRate)
    for (const n of req.equities) {
      const c = snapshot.equities[n]!.currency;
      if (c !== dom) ccys.add(c);
    }
  const hw: Record<string, HullWhiteCalibration> = {};
  for (const c of ccys) {
    const rv = snapshot.rateVols?.[c];
    if (!rv)
      fail(
        'E_NO_RATE_VOLS',
        `rateVols.${c}`,
        'must give caplet or swaption vols to calibrate the stochastic rate',
        undefined,
        `add rateVols.${c} to the snapshot, or drop the rate factor`,
      );
    const pick = req.instruments?.rates[c];
    const spec = pick ? { ...rv, quotes: pick.quoteIndices.map((i) => rv.quotes[i]!) } : rv;
    hw[c] = calibrateHullWhite({
      currency: c,
      curve: curves[c]!,
      rateVols: spec,
      mode: req.hwMode ?? 'constant',
    });
  }
  return { snapshot, req, curves, hw, cache: new Map() };
}

/** Calibrates one variant (its factor set) of the ladder. */
export function calibrateVariant(
  snapshot: MarketSnapshot,
  req: LadderCalibrationRequest,
  factors: FactorSet,
): VariantCalibration {
  return calibrateWith(prepare(snapshot, req), factors);
}

/** Calibrates every variant of the ladder on one snapshot (fits shared between variants are done once). */
export function calibrateLadder(snapshot: MarketSnapshot, req: LadderCalibrationRequest): LadderCalibration {
  const t0 = nowMs();
  const sh = prepare(snapshot, req);
  const variants = factorSubsets(req.factors).map((f) => calibrateWith(sh, f));
  const localVol: Record<string, LocalVolCalibration> = {};
  const warnings: FieldIssue[] = [];
  if (req.localVol)
    for (const name of req.equities) {
      const eq = snapshot.equities[name]!;
      localVol[name] = calibrateLocalVol({ name, equity: eq, curve: sh.curves[eq.currency]! });
      warnings.push(...localVol[name]!.warnings);
    }
  const fx: Record<string, FxCalibration> = {};
  for (const [name, q] of Object.entries(snapshot.fx ?? {})) {
    const users = req.equities.filter((e) => snapshot.equities[e]!.currency === q.foreign);
    if (q.domestic === snapshot.domestic && users.length) fx[name] = calibrateFx(snapshot, name, users);
  }
  for (const v of variants)
    if (!v.ok)
      warnings.push(
        issue(
          'W_VARIANT_FIT',
          `variant ${v.id}`,
          'must converge and meet its fit tolerance',
          Number(v.cost.rmseVolPoints.toFixed(3)),
          'its prices carry a calibration error: read its report before comparing',
          'warning',
        ),
      );
  return {
    date: snapshot.date,
    variants,
    hullWhite: sh.hw,
    localVol,
    fx,
    seconds: (nowMs() - t0) / 1000,
    warnings,
  };
}
