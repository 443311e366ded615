/** Shared builders for simulation tests: plain variants on flat curves, and a run helper. */
import { expect } from 'vitest';
import type { EquityDynamics, HullWhiteParams, VariantSpec } from '../../../src/engine/simulation/types.ts';
import { BUILTIN_TEST_PAYOFFS, type RunSpec } from '../../../src/engine/simulation/runSpec.ts';
import {
  inProcessExecutor,
  runSimulation,
  type RunResult,
} from '../../../src/engine/simulation/runSimulation.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import type { TestPayoff } from '../../../src/engine/simulation/testPayoffs.ts';

export const FULL = process.env.FT_PROFILE === 'full';

export function flatRate(ccy: string, r: number, hw?: HullWhiteParams) {
  return {
    curve: { currency: ccy, times: [0.5, 1, 2, 5, 10, 20, 40], zeroRates: [r, r, r, r, r, r, r] },
    ...(hw ? { hw } : {}),
  };
}

export function oneEquity(opts: {
  id?: string;
  spot: number;
  q?: number;
  r: number;
  dynamics: EquityDynamics;
  hw?: HullWhiteParams;
  rhoSr?: number;
  scheme?: 'qe' | 'euler';
}): VariantSpec {
  const names = ['eq:A', 'rate:DOM'];
  const c = opts.rhoSr ?? 0;
  return {
    id: opts.id ?? 'v',
    label: opts.id ?? 'v',
    domestic: 'DOM',
    equities: [
      { name: 'A', currency: 'DOM', spot: opts.spot, divYield: opts.q ?? 0, dynamics: opts.dynamics },
    ],
    rates: { DOM: flatRate('DOM', opts.r, opts.hw) },
    fx: [],
    correlation: {
      names,
      matrix: [
        [1, c],
        [c, 1],
      ],
    },
    ...(opts.scheme ? { hestonScheme: opts.scheme } : {}),
  };
}

export const bsDyn = (vol: number): EquityDynamics => ({ kind: 'bs', volTimes: [1], vols: [vol] });

export function spec(
  variants: VariantSpec[],
  payoffs: TestPayoff[],
  o: {
    maxStep: number;
    paths: number;
    seed?: number;
    batchSize?: number;
    antithetic?: boolean;
    scenarios?: RunSpec['scenarios'];
  },
): RunSpec {
  return {
    variants,
    payoff: { factory: BUILTIN_TEST_PAYOFFS, description: payoffs },
    grid: { eventTimes: [], maxStep: o.maxStep },
    seed: o.seed ?? 20261201,
    maxPaths: o.paths,
    batchSize: o.batchSize ?? 5000,
    ...(o.antithetic ? { antithetic: true } : {}),
    ...(o.scenarios ? { scenarios: o.scenarios } : {}),
  };
}

export async function run(s: RunSpec): Promise<RunResult> {
  return runSimulation(s, inProcessExecutor());
}

/** Asserts |mean − exact| ≤ 3 SE (+ an optional allowance for a known bias) and SE ≤ cap, printing everything on failure. */
export function expectWithinSe(
  r: RunResult,
  column: number,
  exact: number,
  seCap: number,
  label: string,
  bias = 0,
) {
  const st = columnStats(r.sums);
  const m = st.mean(column);
  const se = st.se(column);
  const msg = `${label}: expected ${exact}, computed ${m} ± ${se} (tolerance 3 SE + ${bias}, SE cap ${seCap}, ${r.paths} paths)`;
  expect(Math.abs(m - exact), msg).toBeLessThanOrEqual(3 * se + bias);
  expect(se, msg).toBeLessThanOrEqual(seCap);
}
