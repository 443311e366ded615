/**
 * Local-volatility diagnostic: Dupire's local vol (B. Dupire, "Pricing with a smile", Risk 7(1), 1994) from the
 * fitted SVI surface, in total-variance form (J. Gatheral, "The Volatility Surface", Wiley 2006, eq. (1.10)):
 *   σ_loc²(T, k) = ∂_T w / [1 − (k/w) ∂_k w + ¼(−¼ − 1/w + k²/w²)(∂_k w)² + ½ ∂²_k w],  k = ln(K/F(T)),
 * output as the `localvol` grid of the simulation contract (values at times × log-moneyness ln(K/F(t))).
 * Where the denominator or ∂_T w is not positive (residual arbitrage of the fit), the value is floored and the
 * cell counted in the report. A Monte Carlo check (simulation layer, deterministic rates) reprices the grid's
 * vanillas and reports each error beside its standard error.
 */
import type { CurveSpec, DiscountCurve, EquityQuote } from '../market/types.ts';
import type { EquityDynamics, VariantSpec } from '../simulation/types.ts';
import type { FieldIssue } from '../errors.ts';
import { issue } from '../errors.ts';
import { fitSviSurface, sviSurfaceAt, type SviSurface } from './sviSurface.ts';
import { gridQuotes, type VolQuote } from './volGrid.ts';
import { makeBatchContext, simulateBatch } from '../simulation/batch.ts';
import { controlVariate, emptySums, mergeSums } from '../simulation/momentSums.ts';
import { batchCount, BUILTIN_TEST_PAYOFFS, type RunSpec } from '../simulation/runSpec.ts';
import { testPayoffFactory, type TestPayoff } from '../simulation/testPayoffs.ts';
import { blackImpliedVol, blackVega } from './blackFormulas.ts';
import { nowMs } from './clock.ts';
import { exp } from '../math/detMath.ts';

export type LocalVolDynamics = Extract<EquityDynamics, { kind: 'localvol' }>;

export interface LocalVolCalibration {
  dynamics: LocalVolDynamics;
  surface: SviSurface;
  /** Cells where Dupire's formula had to be floored. */
  flooredCells: number;
  /** Local vol has no characteristic function: vanillas need the PDE or Monte Carlo (its cost in the ladder). */
  characteristicFunction: 'none';
  warnings: FieldIssue[];
  seconds: number;
}

/** Dupire local vol at (T, k) from the SVI surface, with the floor `minVol` where the formula breaks down. */
export function dupireLocalVol(
  surface: SviSurface,
  T: number,
  k: number,
  minVol = 0.01,
  maxVol = 3,
): { vol: number; floored: boolean } {
  const { w, wT, wk, wkk } = sviSurfaceAt(surface, T, k);
  const den = 1 - (k / w) * wk + 0.25 * (-0.25 - 1 / w + (k * k) / (w * w)) * wk * wk + 0.5 * wkk;
  if (!(w > 0) || !(den > 1e-8) || !(wT > 0)) return { vol: minVol, floored: true };
  const v = Math.sqrt(wT / den);
  if (!(v >= minVol)) return { vol: minVol, floored: true };
  return { vol: Math.min(v, maxVol), floored: v > maxVol };
}

/** Fits SVI to the grid and samples Dupire's local vol on a (time × log-moneyness) grid. */
export function calibrateLocalVol(input: {
  name: string;
  equity: EquityQuote;
  curve: DiscountCurve;
  /**
   * Sampling times (default per interval between expiries: just after its start, then 7 equal steps to its end, so the
   * bilinear grid follows the jumps of ∂_T w at the quoted expiries and the fast change of σ_loc at short times).
   */
  times?: number[];
  /** Log-moneyness nodes (default −1.2 … 0.8 in steps of 0.025). */
  logK?: number[];
}): LocalVolCalibration {
  const t0 = nowMs();
  const field = `equities.${input.name}`;
  const surface = fitSviSurface(input.equity, input.curve, field);
  const E = input.equity.vols.expiries;
  const times =
    input.times ??
    E.flatMap((T, i) => {
      const lo = i === 0 ? 0 : E[i - 1]!;
      return Array.from({ length: 8 }, (_, j) => lo + (j === 0 ? 0.01 : j / 7) * (T - lo));
    });
  const logK = input.logK ?? Array.from({ length: 81 }, (_, j) => -1.2 + 0.025 * j);
  let floored = 0;
  const values = times.map((t) =>
    logK.map((k) => {
      const r = dupireLocalVol(surface, t, k);
      if (r.floored) floored++;
      return r.vol;
    }),
  );
  const warnings = [...surface.warnings];
  if (floored > 0)
    warnings.push(
      issue(
        'W_LOCALVOL_FLOORED',
        `${field}.vols`,
        'must give a positive Dupire denominator and calendar slope everywhere on the local-vol grid',
        floored,
        'cells where it did not were floored at 1% vol (or capped at 300%); they lie mostly outside the quoted strikes',
        'warning',
      ),
    );
  return {
    dynamics: { kind: 'localvol', times, logK, values },
    surface,
    flooredCells: floored,
    characteristicFunction: 'none',
    warnings,
    seconds: (nowMs() - t0) / 1000,
  };
}

/** Monte Carlo repricing of quotes under a local-vol equity with deterministic rates; errors beside their SEs. */
export function localVolRepricing(input: {
  name: string;
  currency: string;
  equity: EquityQuote;
  curve: DiscountCurve;
  curveSpec: CurveSpec;
  dynamics: LocalVolDynamics;
  quotes?: VolQuote[];
  paths: number;
  seed: string;
  maxStep?: number;
}): {
  rows: {
    expiry: number;
    strike: number;
    marketVol: number;
    mcVol: number;
    errorPoints: number;
    sePoints: number;
  }[];
  within3Se: number;
  seconds: number;
} {
  const t0 = nowMs();
  const quotes = input.quotes ?? gridQuotes(input.equity, input.curve, `equities.${input.name}`);
  const variant: VariantSpec = {
    id: 'localvol-check',
    label: 'Local volatility (calibration check)',
    domestic: input.currency,
    equities: [
      {
        name: input.name,
        currency: input.currency,
        spot: input.equity.spot,
        divYield: input.equity.divYield,
        dynamics: input.dynamics,
      },
    ],
    rates: { [input.currency]: { curve: input.curveSpec } },
    fx: [],
    correlation: { names: [`eq:${input.name}`], matrix: [[1]] },
  };
  const payoffs: TestPayoff[] = quotes.map((q) => ({
    kind: q.isCall ? 'call' : 'put',
    equity: input.name,
    strike: q.strike,
    expiry: q.expiry,
  }));
  const expiries = [...new Set(quotes.map((q) => q.expiry))];
  const ctl = new Map<number, number>();
  for (const T of expiries) {
    ctl.set(T, payoffs.length);
    payoffs.push({ kind: 'discountedAsset', equity: input.name, time: T });
  }
  const batchSize = 4096;
  const spec: RunSpec = {
    variants: [variant],
    payoff: { factory: BUILTIN_TEST_PAYOFFS, description: payoffs },
    grid: { eventTimes: expiries, maxStep: input.maxStep ?? 1 / 100 },
    seed: `${input.seed}:calibration-localvol:${input.name}`,
    batchSize,
    maxPaths: Math.ceil(input.paths / batchSize) * batchSize,
  };
  const ctx = makeBatchContext(spec, testPayoffFactory);
  let sums = emptySums(payoffs.length);
  for (let b = 0; b < batchCount(spec); b++) sums = mergeSums(sums, simulateBatch(ctx, b).sums);
  let within = 0;
  const rows = quotes.map((q, i) => {
    const c = controlVariate(
      sums,
      i,
      ctl.get(q.expiry)!,
      input.equity.spot * exp(-input.equity.divYield * q.expiry),
    );
    const mcVol = blackImpliedVol({ ...q, price: c.mean });
    const vega = blackVega(q);
    const sePoints = (c.se / vega) * 100;
    const errorPoints = (mcVol - q.vol) * 100;
    if (Math.abs(errorPoints) <= 3 * sePoints) within++;
    return { expiry: q.expiry, strike: q.strike, marketVol: q.vol, mcVol, errorPoints, sePoints };
  });
  return { rows, within3Se: within, seconds: (nowMs() - t0) / 1000 };
}
