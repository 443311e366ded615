/**
 * The deterministic path shifts behind delta and rho (simulation/shiftBatch.ts) against re-simulating a variant whose
 * market input is bumped, on the same random numbers: a parallel shift δ of a zero curve adds δ to φ(t) and leaves
 * x, a and σ unchanged under Hull–White (Brigo & Mercurio 2006, Sec. 3.3), and a spot bump rescales the log-dynamics
 * of Black–Scholes and Heston. Both must give the same prices up to rounding, in both currencies of a quanto hybrid.
 */
import { describe, it, expect } from 'vitest';
import {
  BUILTIN_TEST_PAYOFFS,
  inProcessExecutor,
  runSimulation,
  resultStats,
  columnIndex,
} from '../../src/engine/simulation/index.ts';
import type { VariantSpec } from '../../src/engine/simulation/types.ts';
import type { CurveSpec } from '../../src/engine/market/types.ts';
import { demoMarket, expectClose } from './helpers.ts';

const market = demoMarket();
const shifted = (c: CurveSpec, d: number): CurveSpec => ({ ...c, zeroRates: c.zeroRates!.map((z) => z + d) });

function hybrid(id: string, o: { dDom?: number; dAsh?: number; spot?: number } = {}): VariantSpec {
  return {
    id,
    label: id,
    domestic: 'DOM',
    equities: [
      {
        name: 'KESO',
        currency: 'ASH',
        spot: o.spot ?? 2350,
        divYield: 0.02,
        dynamics: { kind: 'heston', v0: 0.05, kappa: 1.5, theta: 0.05, sigma: 0.6, rho: -0.7 },
      },
      {
        name: 'ALDR',
        currency: 'DOM',
        spot: 4200,
        divYield: 0.018,
        dynamics: { kind: 'bs', volTimes: [1, 3], vols: [0.18, 0.2] },
      },
    ],
    rates: {
      DOM: { curve: shifted(market.curves.DOM!, o.dDom ?? 0), hw: { a: 0.04, sigma: 0.009 } },
      ASH: { curve: shifted(market.curves.ASH!, o.dAsh ?? 0), hw: { a: 0.03, sigma: 0.007 } },
    },
    fx: [{ name: 'ASH/DOM', foreign: 'ASH', spot: 1.37, vol: 0.09 }],
    correlation: {
      names: ['eq:KESO', 'eq:ALDR', 'var:KESO', 'rate:DOM', 'rate:ASH', 'fx:ASH/DOM'],
      matrix: [
        [1, 0.45, -0.7, 0.05, 0.1, -0.2],
        [0.45, 1, 0, 0.15, 0.05, -0.1],
        [-0.7, 0, 1, 0, 0, 0],
        [0.05, 0.15, 0, 1, 0.55, 0.1],
        [0.1, 0.05, 0, 0.55, 1, -0.05],
        [-0.2, -0.1, 0, 0.1, -0.05, 1],
      ],
    },
  };
}

const payoffs = [
  { kind: 'call', equity: 'KESO', strike: 2350, expiry: 3 },
  { kind: 'call', equity: 'ALDR', strike: 4300, expiry: 3 },
  { kind: 'discountedAsset', equity: 'KESO', time: 3 },
  { kind: 'fxForward', fx: 'ASH/DOM', expiry: 3 },
  { kind: 'zcb', maturity: 5, observe: 3 },
  { kind: 'caplet', fixing: 2, payment: 3, strike: 0.03 },
  { kind: 'zbo', type: 'put', expiry: 2, maturity: 4, strike: 0.95 },
];

describe('path shifts for delta and rho equal re-simulation with the bumped input on the same random numbers', () => {
  it('a parallel shift of the DOM and ASH curves (+10 bp, −5 bp) and a 1 % KESO spot bump', async () => {
    const dDom = 1e-3;
    const dAsh = -5e-4;
    const r = await runSimulation(
      {
        variants: [
          hybrid('base'),
          hybrid('curves bumped', { dDom, dAsh }),
          hybrid('spot bumped', { spot: 2350 * 1.01 }),
        ],
        scenarios: [{}, { rateShift: { DOM: dDom, ASH: dAsh } }, { spotScale: { KESO: 1.01 } }],
        payoff: { factory: BUILTIN_TEST_PAYOFFS, description: payoffs },
        grid: { eventTimes: [2, 3, 4], maxStep: 0.25 },
        seed: 'crosscheck-shifts',
        maxPaths: 8192,
        batchSize: 4096,
      },
      inProcessExecutor(),
    );
    const st = resultStats(r);
    payoffs.forEach((p, o) => {
      const shiftedCol = st.mean(columnIndex(r.shape, 0, 1, o));
      const resimCol = st.mean(columnIndex(r.shape, 1, 0, o));
      expectClose(
        `rate shift vs bumped curves, ${JSON.stringify(p)}`,
        shiftedCol,
        resimCol,
        1e-10 * Math.max(1, Math.abs(resimCol)),
      );
      const scaled = st.mean(columnIndex(r.shape, 0, 2, o));
      const resimSpot = st.mean(columnIndex(r.shape, 2, 0, o));
      // The rate bump moves every one of these prices except S·X/B, which it leaves unchanged path by path (so the
      // agreement above is not between unchanged numbers).
      const base = st.mean(columnIndex(r.shape, 0, 0, o));
      if (p.kind !== 'discountedAsset')
        expect(Math.abs(resimCol - base), `rate bump moves ${p.kind}`).toBeGreaterThan(
          1e-7 * Math.max(1, Math.abs(base)),
        );
      expectClose(
        `spot scale vs bumped spot, ${JSON.stringify(p)}`,
        scaled,
        resimSpot,
        1e-10 * Math.max(1, Math.abs(resimSpot)),
      );
    });
  });
});
