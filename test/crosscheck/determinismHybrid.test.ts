/**
 * Reproducibility of a hybrid run (DESIGN step 6): a foreign Heston equity with its quanto drift, Hull–White rates in
 * both currencies and a lognormal FX rate, priced in process and on two worker threads from the same seed. The sums
 * must be identical bit for bit, and adding another variant on the same grid must not change this one's numbers.
 */
import { describe, it, expect } from 'vitest';
import {
  BUILTIN_TEST_PAYOFFS,
  inProcessExecutor,
  runSimulation,
  type RunResult,
  type RunSpec,
} from '../../src/engine/simulation/index.ts';
import { makeNodeWorkerExecutor } from '../../src/engine/simulation/runner.node.ts';
import type { VariantSpec } from '../../src/engine/simulation/types.ts';
import { demoMarket } from './helpers.ts';

const market = demoMarket();

const hybrid: VariantSpec = {
  id: 'heston+hw(DOM)+hw(ASH)',
  label: 'hybrid',
  domestic: 'DOM',
  equities: [
    {
      name: 'KESO',
      currency: 'ASH',
      spot: 2350,
      divYield: 0.02,
      dynamics: { kind: 'heston', v0: 0.05, kappa: 1.5, theta: 0.05, sigma: 0.6, rho: -0.7 },
    },
  ],
  rates: {
    DOM: { curve: market.curves.DOM!, hw: { a: 0.04, sigma: [0.008, 0.01], sigmaTimes: [2, 30] } },
    ASH: { curve: market.curves.ASH!, hw: { a: 0.03, sigma: 0.007 } },
  },
  fx: [{ name: 'ASH/DOM', foreign: 'ASH', spot: 1.37, vol: 0.09 }],
  correlation: {
    names: ['eq:KESO', 'var:KESO', 'rate:DOM', 'rate:ASH', 'fx:ASH/DOM'],
    matrix: [
      [1, -0.7, 0.05, 0.1, -0.2],
      [-0.7, 1, 0, 0, 0],
      [0.05, 0, 1, 0.55, 0.1],
      [0.1, 0, 0.55, 1, -0.05],
      [-0.2, 0, 0.1, -0.05, 1],
    ],
  },
};

const simple: VariantSpec = {
  ...hybrid,
  id: 'bs',
  label: 'Black–Scholes, deterministic rates',
  equities: [{ ...hybrid.equities[0]!, dynamics: { kind: 'bs', volTimes: [3], vols: [0.22] } }],
  rates: { DOM: { curve: market.curves.DOM! }, ASH: { curve: market.curves.ASH! } },
};

function spec(variants: VariantSpec[]): RunSpec {
  return {
    variants,
    payoff: {
      factory: BUILTIN_TEST_PAYOFFS,
      description: [
        { kind: 'call', equity: 'KESO', strike: 2350, expiry: 3 },
        { kind: 'discountedAsset', equity: 'KESO', time: 3 },
        { kind: 'fxForward', fx: 'ASH/DOM', expiry: 3 },
        { kind: 'zcb', maturity: 3 },
      ],
    },
    grid: { eventTimes: [2, 3], maxStep: 0.25 },
    seed: 'crosscheck-determinism',
    maxPaths: 6 * 2048,
    batchSize: 2048,
  };
}

function sameBits(a: ArrayLike<number>, b: ArrayLike<number>): { equal: boolean; first: number } {
  if (a.length !== b.length) return { equal: false, first: -1 };
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return { equal: false, first: i };
  return { equal: true, first: -1 };
}

describe('a hybrid run is reproducible bit for bit', () => {
  it('in process and on two worker threads: identical means and co-moments', async () => {
    const s = spec([simple, hybrid]);
    const a = await runSimulation(s, inProcessExecutor());
    const exec = makeNodeWorkerExecutor(2);
    let b: RunResult;
    try {
      b = await runSimulation(s, exec);
    } finally {
      await exec.close();
    }
    expect(b.sums.count).toBe(a.sums.count);
    const m = sameBits(a.sums.mean, b.sums.mean);
    expect(
      m.equal,
      `means differ first at column ${m.first}: ${a.sums.mean[m.first]} vs ${b.sums.mean[m.first]}`,
    ).toBe(true);
    const c = sameBits(a.sums.comoment, b.sums.comoment);
    expect(c.equal, `co-moments differ first at entry ${c.first}`).toBe(true);
    // Not a trivial run: the hybrid's call has a positive value and a spread.
    expect(a.sums.mean[4]!).toBeGreaterThan(0);
    expect(a.sums.comoment[4 * 8 + 4]!).toBeGreaterThan(0);
  });

  it('adding a variant on the same grid leaves the other variant’s sums unchanged (per-driver streams)', async () => {
    const alone = await runSimulation(spec([hybrid]), inProcessExecutor());
    const both = await runSimulation(spec([simple, hybrid]), inProcessExecutor());
    // Columns 4..7 of the two-variant run are the hybrid's (variant-major column order).
    const k = 4;
    const m = sameBits(alone.sums.mean, both.sums.mean.slice(k, 2 * k));
    expect(m.equal, `hybrid means changed at output ${m.first}`).toBe(true);
    for (let i = 0; i < k; i++) {
      const row = both.sums.comoment.slice((k + i) * 2 * k + k, (k + i) * 2 * k + 2 * k);
      const r = sameBits(alone.sums.comoment.slice(i * k, (i + 1) * k), row);
      expect(r.equal, `hybrid co-moment row ${i} changed at ${r.first}`).toBe(true);
    }
  });
});
