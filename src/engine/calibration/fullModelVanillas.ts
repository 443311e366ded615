/**
 * Monte Carlo prices of vanillas under the full Heston–Hull–White model (no approximation), on the simulation
 * layer's path generator (Heston by Andersen's QE scheme, Hull–White state and its integral exactly), with a seed
 * of its own: calibration never shares random numbers with a study's pricing paths.
 * Each price uses the discounted asset S(T)/B(T) as control variate (Glasserman 2003, Sec. 4.1, via the simulation
 * layer's `controlVariate`). Implied vols of the Monte Carlo prices and their standard errors (SE_price / vega: the delta method, common practice).
 */
import type { CurveSpec } from '../market/types.ts';
import type { HestonParams, HullWhiteParams, HestonScheme, VariantSpec } from '../simulation/types.ts';
import { makeBatchContext, simulateBatch } from '../simulation/batch.ts';
import { controlVariate, emptySums, mergeSums } from '../simulation/momentSums.ts';
import { batchCount, BUILTIN_TEST_PAYOFFS, type RunSpec } from '../simulation/runSpec.ts';
import { testPayoffFactory, type TestPayoff } from '../simulation/testPayoffs.ts';
import { blackImpliedVol, blackVega } from './blackFormulas.ts';
import type { VolQuote } from './volGrid.ts';
import { nowMs } from './clock.ts';
import { exp } from '../math/detMath.ts';

export interface FullModelInput {
  name: string;
  currency: string;
  spot: number;
  divYield: number;
  curve: CurveSpec;
  heston: HestonParams;
  hw: HullWhiteParams;
  /** corr(S, r); corr(S, v) is `heston.rho`; corr(v, r) = 0. */
  rhoSR: number;
  quotes: VolQuote[];
  paths: number;
  seed: string;
  /** Largest time step, years (default 1/16). */
  maxStep?: number;
  scheme?: HestonScheme;
}

export interface FullModelResult {
  prices: number[];
  priceSe: number[];
  vols: number[];
  /** Standard error of each implied vol (decimals). */
  volSe: number[];
  paths: number;
  seconds: number;
}

/** Prices every quote (its out-of-the-money side) by Monte Carlo of the full model. */
export function fullModelVanillas(input: FullModelInput): FullModelResult {
  const t0 = nowMs();
  const eqName = input.name;
  const variant: VariantSpec = {
    id: 'calibration-check',
    label: 'Heston–Hull–White (full model, calibration check)',
    domestic: input.currency,
    equities: [
      {
        name: eqName,
        currency: input.currency,
        spot: input.spot,
        divYield: input.divYield,
        dynamics: { kind: 'heston', ...input.heston },
      },
    ],
    rates: { [input.currency]: { curve: input.curve, hw: input.hw } },
    fx: [],
    correlation: {
      names: [`eq:${eqName}`, `var:${eqName}`, `rate:${input.currency}`],
      matrix: [
        [1, input.heston.rho, input.rhoSR],
        [input.heston.rho, 1, 0],
        [input.rhoSR, 0, 1],
      ],
    },
    hestonScheme: input.scheme ?? 'qe',
  };
  const payoffs: TestPayoff[] = input.quotes.map((q) => ({
    kind: q.isCall ? 'call' : 'put',
    equity: eqName,
    strike: q.strike,
    expiry: q.expiry,
  }));
  // Control variate per expiry: S(T)/B(T), exact mean S0·e^{−qT} (a martingale under the full model).
  const expiries = [...new Set(input.quotes.map((q) => q.expiry))];
  const controlCol = new Map<number, number>();
  for (const T of expiries) {
    controlCol.set(T, payoffs.length);
    payoffs.push({ kind: 'discountedAsset', equity: eqName, time: T });
  }
  const batchSize = 4096;
  const paths = Math.max(2, Math.ceil(input.paths / batchSize) * batchSize);
  const spec: RunSpec = {
    variants: [variant],
    payoff: { factory: BUILTIN_TEST_PAYOFFS, description: payoffs },
    grid: { eventTimes: input.quotes.map((q) => q.expiry), maxStep: input.maxStep ?? 1 / 16 },
    seed: input.seed,
    batchSize,
    maxPaths: paths,
  };
  const ctx = makeBatchContext(spec, testPayoffFactory);
  let sums = emptySums(payoffs.length);
  for (let b = 0; b < batchCount(spec); b++) sums = mergeSums(sums, simulateBatch(ctx, b).sums);
  const cv = input.quotes.map((q, i) =>
    controlVariate(sums, i, controlCol.get(q.expiry)!, input.spot * exp(-input.divYield * q.expiry)),
  );
  const prices = cv.map((c) => c.mean);
  const priceSe = cv.map((c) => c.se);
  const vols = input.quotes.map((q, i) => blackImpliedVol({ ...q, price: prices[i]! }));
  const volSe = input.quotes.map((q, i) => {
    const v = Number.isFinite(vols[i]!) ? vols[i]! : q.vol;
    const vega = blackVega({ ...q, vol: v });
    return priceSe[i]! / Math.max(vega, 1e-12);
  });
  return { prices, priceSe, vols, volSe, paths, seconds: (nowMs() - t0) / 1000 };
}
