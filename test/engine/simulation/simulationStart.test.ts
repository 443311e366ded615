/**
 * The generator's start option (nested simulation): a batch that continues one path of another batch copies that
 * path's history bit for bit and branches from its state. Checks: a start at step 0 is the plain simulation, the
 * copied history is bit-identical, continuing with the outer path's own normals reproduces it (exactly where the
 * running state is stored as it runs, to the last bits elsewhere), and the branched paths keep the martingale
 * E[S(T)/B(T) | F_t] = S(t)/B(t) e^{−q(T−t)} within 3 SE.
 */
import { describe, it, expect } from 'vitest';
import { makeDriverLayout, type DriverLayout } from '../../../src/engine/simulation/drivers.ts';
import { normalsBlockSize, prepareVariant } from '../../../src/engine/simulation/pathGenerator.ts';
import { makeTimeGrid, type TimeGrid } from '../../../src/engine/simulation/timeGrid.ts';
import type { PathBatch, VariantSpec } from '../../../src/engine/simulation/types.ts';
import { makeNormalSource, makeUniformStream } from '../../../src/engine/random/index.ts';
import { bsDyn, flatRate, oneEquity } from './helpers.ts';

const heston = { kind: 'heston' as const, v0: 0.04, kappa: 1.5, theta: 0.05, sigma: 0.6, rho: -0.7 };

/** Foreign equity, FX and two Hull–White currencies (the drivers of every recovered state). */
function hybrid(): VariantSpec {
  return {
    id: 'hybrid',
    label: 'hybrid',
    domestic: 'DOM',
    equities: [{ name: 'B', currency: 'ASH', spot: 80, divYield: 0.01, dynamics: heston }],
    rates: {
      DOM: flatRate('DOM', 0.04, { a: 0.05, sigma: 0.01 }),
      ASH: flatRate('ASH', 0.02, { a: 0.1, sigma: 0.008 }),
    },
    fx: [{ name: 'ASHDOM', foreign: 'ASH', spot: 1.3, vol: 0.1 }],
    correlation: {
      names: ['eq:B', 'var:B', 'fx:ASHDOM', 'rate:DOM', 'rate:ASH'],
      matrix: [
        [1, -0.7, 0.3, 0.1, 0.2],
        [-0.7, 1, 0, 0, 0],
        [0.3, 0, 1, -0.2, 0.25],
        [0.1, 0, -0.2, 1, 0.5],
        [0.2, 0, 0.25, 0.5, 1],
      ],
    },
  };
}

const CASES: { name: string; variant: VariantSpec; exactState: boolean }[] = [
  {
    name: 'Black–Scholes + Hull–White',
    variant: oneEquity({
      spot: 100,
      q: 0.02,
      r: 0.03,
      dynamics: bsDyn(0.25),
      hw: { a: 0.05, sigma: 0.01 },
      rhoSr: 0.3,
    }),
    exactState: false,
  },
  {
    name: 'Heston-QE, deterministic rates',
    variant: oneEquity({ spot: 100, q: 0.02, r: 0.03, dynamics: heston }),
    exactState: true,
  },
  {
    name: 'Heston full-truncation Euler',
    variant: oneEquity({ spot: 100, q: 0.02, r: 0.03, dynamics: heston, scheme: 'euler' }),
    exactState: false,
  },
  { name: 'foreign Heston-QE equity, FX, two Hull–White rates', variant: hybrid(), exactState: false },
];

function setup(variant: VariantSpec) {
  const layout: DriverLayout = makeDriverLayout([variant]);
  const grid: TimeGrid = makeTimeGrid([2], 0.1, []);
  return { layout, grid, pv: prepareVariant(variant, grid, layout) };
}

function normals(grid: TimeGrid, layout: DriverLayout, n: number, seed: string, fromStep = 0): Float64Array {
  const out = new Float64Array(normalsBlockSize(grid, layout, n, fromStep));
  makeNormalSource(makeUniformStream(seed)).fill(out, 0, out.length);
  return out;
}

/** Every stored array of a batch, named. */
function arrays(b: PathBatch): [string, Float64Array][] {
  return [
    ...Object.entries(b.equity).map(([k, a]) => [`equity.${k}`, a] as [string, Float64Array]),
    ...Object.entries(b.variance).map(([k, a]) => [`variance.${k}`, a] as [string, Float64Array]),
    ...Object.entries(b.fx).map(([k, a]) => [`fx.${k}`, a] as [string, Float64Array]),
    ...Object.entries(b.shortRate).map(([k, a]) => [`shortRate.${k}`, a] as [string, Float64Array]),
    ['discount', b.discount],
  ];
}

describe('generator start option', () => {
  for (const c of CASES) {
    it(`${c.name}: a start at step 0 equals the plain simulation bit for bit`, () => {
      const { layout, grid, pv } = setup(c.variant);
      const z = normals(grid, layout, 64, 'start-0');
      const plain = pv.simulate(z, 64);
      const outer = pv.simulate(normals(grid, layout, 8, 'outer'), 8);
      const started = pv.simulate(z, 64, { from: outer, path: 3, step: 0 });
      const b = arrays(started);
      arrays(plain).forEach(([name, a], i) => {
        const d = a.findIndex((x, k) => !Object.is(x, b[i]![1][k]));
        expect(d, `${name}: first differing index`).toBe(-1);
      });
    });

    it(`${c.name}: the continued batch holds the outer path's history bit for bit and branches after it`, () => {
      const { layout, grid, pv } = setup(c.variant);
      const P = 8;
      const n = 16;
      const outer = pv.simulate(normals(grid, layout, P, 'outer'), P);
      const p = 5;
      const k0 = 7;
      const inner = pv.simulate(normals(grid, layout, n, 'inner', k0), n, { from: outer, path: p, step: k0 });
      const ia = arrays(inner);
      arrays(outer).forEach(([name, a], i) => {
        const b = ia[i]![1];
        for (let k = 0; k <= k0; k++)
          for (let q = 0; q < n; q++)
            expect(Object.is(b[k * n + q], a[k * P + p]), `${name} step ${k} inner path ${q}`).toBe(true);
      });
      // Fresh normals after t_{k0}: the inner paths differ from each other at the next step.
      const s = inner.equity[Object.keys(inner.equity)[0]!]!;
      expect(s[(k0 + 1) * n]).not.toBe(s[(k0 + 1) * n + 1]);
    });

    it(`${c.name}: continuing with the outer path's own normals reproduces it (${c.exactState ? 'exactly' : 'to the last bits'})`, () => {
      const { layout, grid, pv } = setup(c.variant);
      const P = 6;
      const zo = normals(grid, layout, P, 'outer-own');
      const outer = pv.simulate(zo, P);
      const nSteps = grid.times.length - 1;
      const w = layout.width;
      const p = 2;
      const k0 = 9;
      const zi = new Float64Array(normalsBlockSize(grid, layout, 1, k0));
      for (let k = k0; k < nSteps; k++)
        for (let s = 0; s < w; s++) zi[(k - k0) * w + s] = zo[(k * w + s) * P + p]!;
      const inner = pv.simulate(zi, 1, { from: outer, path: p, step: k0 });
      const ia = arrays(inner);
      // common practice: recovering ln S = log(exp(y)) and x = (x + φ) − φ loses at most a few ulps, which the
      // following steps carry along; 1e-12 relative is far above that and far below any Monte Carlo effect.
      const tol = c.exactState ? 0 : 1e-12;
      arrays(outer).forEach(([name, a], i) => {
        const b = ia[i]![1];
        for (let k = k0; k <= nSteps; k++) {
          const want = a[k * P + p]!;
          const got = b[k]!;
          const err = Math.abs(got - want) / Math.max(1e-300, Math.abs(want));
          expect(
            err,
            `${name} step ${k}: outer ${want}, continued ${got}, tolerance ${tol}`,
          ).toBeLessThanOrEqual(tol);
        }
      });
    });
  }

  it('branched paths keep the deflated equity a martingale from the branching state (within 3 SE)', () => {
    // Martingale property of the discounted, dividend-adjusted equity under the bank-account measure (common
    // practice; Andersen 2008, Sec. 7.2 for the QE martingale correction): E[S(T) e^{qT}/B(T) | F_t] = S(t) e^{qt}/B(t).
    const variant = oneEquity({
      spot: 100,
      q: 0.02,
      r: 0.03,
      dynamics: heston,
      hw: { a: 0.05, sigma: 0.01 },
      rhoSr: 0.3,
    });
    const { layout, grid, pv } = setup(variant);
    const outer = pv.simulate(normals(grid, layout, 4, 'mart-outer'), 4);
    const nSteps = grid.times.length - 1;
    const k0 = 10;
    const n = 20_000;
    for (const p of [0, 3]) {
      const inner = pv.simulate(normals(grid, layout, n, `mart-${p}`, k0), n, {
        from: outer,
        path: p,
        step: k0,
      });
      const S = inner.equity.A!;
      const T = grid.times[nSteps]!;
      const t = grid.times[k0]!;
      let sum = 0;
      let sumSq = 0;
      for (let q = 0; q < n; q++) {
        const y =
          (S[nSteps * n + q]! * inner.discount[nSteps * n + q]! * Math.exp(0.02 * (T - t))) /
          inner.discount[k0 * n + q]!;
        sum += y;
        sumSq += y * y;
      }
      const mean = sum / n;
      const se = Math.sqrt((sumSq / n - mean * mean) / (n - 1));
      const want = outer.equity.A![k0 * 4 + p]!;
      const msg = `path ${p}: S(t) ${want}, E[S(T)B(t)/B(T)] e^{q(T−t)} ${mean} ± ${se}`;
      expect(Math.abs(mean - want), msg).toBeLessThanOrEqual(3 * se);
      expect(se / want, msg).toBeLessThan(0.01);
    }
  });

  it('a start that does not fit the variant is refused with the field named', () => {
    const { layout, grid, pv } = setup(CASES[0]!.variant);
    const outer = pv.simulate(normals(grid, layout, 4, 'o'), 4);
    const z = normals(grid, layout, 2, 'i', 3);
    expect(() => pv.simulate(z, 2, { from: outer, path: 4, step: 3 })).toThrow(/start\.path/);
    expect(() => pv.simulate(z, 2, { from: outer, path: 0, step: 99 })).toThrow(/start\.step/);
    const other = setup(CASES[1]!.variant).pv.simulate(
      normals(grid, makeDriverLayout([CASES[1]!.variant]), 4, 'o'),
      4,
    );
    expect(() => pv.simulate(z, 2, { from: { ...other, shortRate: {} }, path: 0, step: 3 })).toThrow(
      /start\.from/,
    );
  });
});
