import { describe, expect, it } from 'vitest';
import { prepareCosSlice } from '../../../src/engine/calibration/cosPricer.ts';
import { hestonExponentGradientGrid, hestonExponentGrid } from '../../../src/engine/models/hestonCharFn.ts';
import { hestonCosSliceWithGradient } from '../../../src/engine/models/hestonCos.ts';
import type { HestonParams } from '../../../src/engine/simulation/types.ts';

const NAMES = ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const;

/** A calibration-style slice: spot 100, r = 2 %, q = 1 %, range from a 30 % vol (half-width 12·σ√T), 512 terms. */
function sliceAt(T: number, strikes: number[]) {
  const df = Math.exp(-0.02 * T);
  const F = 100 * Math.exp(0.01 * T);
  const half = Math.max(12 * 0.3 * Math.sqrt(T), 0.8);
  const lo = -0.5 * 0.09 * T - half;
  return { df, F, slice: prepareCosSlice({ forward: F, df, strikes, lo, width: 2 * half, terms: 512 }) };
}

describe('COS slice gradient of the calibration', () => {
  // Fang & Oosterlee (2008) Heston set (published.md §1) and the Lewis reference set (published.md §1, from memory).
  const cases: { name: string; p: HestonParams; T: number }[] = [
    {
      name: 'Fang–Oosterlee set, T = 1',
      p: { v0: 0.0175, kappa: 1.5768, theta: 0.0398, sigma: 0.5751, rho: -0.5711 },
      T: 1,
    },
    {
      name: 'Lewis reference set, T = 0.5',
      p: { v0: 0.04, kappa: 4, theta: 0.25, sigma: 1, rho: -0.5 },
      T: 0.5,
    },
  ];
  const strikes = [70, 90, 100, 110, 140];

  for (const c of cases) {
    it(`matches central differences of the slice's own prices (${c.name})`, () => {
      const { slice } = sliceAt(c.T, strikes);
      const g = slice.callPricesWithGradientOnGrid(
        (u, re, im, gRe, gIm) => hestonExponentGradientGrid(c.p, c.T, u, re, im, gRe, gIm),
        5,
      );
      const plain = slice.callPricesOnGrid((u, re, im) => hestonExponentGrid(c.p, c.T, u, re, im));
      g.prices.forEach((x, j) => expect(Math.abs(x - plain[j]!)).toBeLessThan(1e-12));
      NAMES.forEach((n, k) => {
        const h = 1e-5 * Math.max(Math.abs(c.p[n]), 0.01);
        const at = (d: number) =>
          slice.callPricesOnGrid((u, re, im) =>
            hestonExponentGrid({ ...c.p, [n]: c.p[n] + d }, c.T, u, re, im),
          );
        const up = at(h);
        const dn = at(-h);
        strikes.forEach((K, j) => {
          const fd = (up[j]! - dn[j]!) / (2 * h);
          const info = `${n} K=${K}: analytic ${g.gradient[j]![k]}, differences ${fd}`;
          // Central differences: O(h²) ≈ 1e-9 relative plus rounding ~1e-13/h.
          expect(Math.abs(g.gradient[j]![k]! - fd), info).toBeLessThan(1e-6 * Math.max(1, Math.abs(fd)));
        });
      });
    });

    it(`agrees with the models layer's COS gradient on its own range (${c.name})`, () => {
      const { slice } = sliceAt(c.T, strikes);
      const g = slice.callPricesWithGradientOnGrid(
        (u, re, im, gRe, gIm) => hestonExponentGradientGrid(c.p, c.T, u, re, im, gRe, gIm),
        5,
      );
      const ref = hestonCosSliceWithGradient({ S: 100, T: c.T, r: 0.02, q: 0.01, params: c.p, strikes });
      strikes.forEach((K, j) =>
        NAMES.forEach((n, k) => {
          const info = `${n} K=${K}: calibration slice ${g.gradient[j]![k]}, models layer ${ref.gradient[j]![n]}`;
          // Two truncations (fixed market range, 512 terms; the models layer's cumulant range): 1e-6 absolute.
          expect(Math.abs(g.gradient[j]![k]! - ref.gradient[j]![n]), info).toBeLessThan(1e-6 * 100);
        }),
      );
    });
  }
});
