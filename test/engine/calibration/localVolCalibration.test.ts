import { describe, expect, it } from 'vitest';
import {
  calibrateLocalVol,
  dupireLocalVol,
  localVolRepricing,
} from '../../../src/engine/calibration/localVolCalibration.ts';
import {
  butterflyG,
  fitSviSurface,
  sviDerivatives,
  sviW,
} from '../../../src/engine/calibration/sviSurface.ts';
import { gridQuotes } from '../../../src/engine/calibration/volGrid.ts';
import { makeCurve } from '../../../src/engine/market/index.ts';
import type { EquityQuote } from '../../../src/engine/market/types.ts';
import { FO_HESTON, flatCurveSpec, hestonGrid } from './syntheticMarket.ts';

const FULL = process.env.FT_PROFILE === 'full';
const curveSpec = flatCurveSpec('DOM', 0.03);
const curve = makeCurve(curveSpec);

describe('SVI surface', () => {
  it('flags the Vogt parameters as butterfly arbitrage (g < 0 somewhere)', () => {
    // Gatheral & Jacquier (2014), Sec. 5.1 (example attributed to Axel Vogt): a = −0.0410, b = 0.1331, ρ = 0.3060,
    // m = 0.3586, σ = 0.4153, T = 1 — a raw SVI slice with negative density (from memory).
    const s = { a: -0.041, b: 0.1331, rho: 0.306, m: 0.3586, sigma: 0.4153 };
    let minG = Infinity;
    for (let k = -1.5; k <= 1.5; k += 0.01) {
      const { w1, w2 } = sviDerivatives(s, k);
      minG = Math.min(minG, butterflyG(sviW(s, k), w1, w2, k));
    }
    expect(minG).toBeLessThan(0);
  });

  it('fits a Heston-generated grid within 0.15 vol points with no arbitrage left on its k grid', () => {
    const g = hestonGrid({
      ccy: 'DOM',
      spot: 100,
      divYield: 0.01,
      curve: curveSpec,
      heston: FO_HESTON,
      expiries: [0.5, 1, 2, 3, 5],
      moneyness: [0.7, 0.8, 0.9, 1, 1.1, 1.2, 1.3],
    });
    const s = fitSviSurface(g, curve, 'equities.EQD');
    expect(s.maxAbsVolPoints).toBeLessThan(0.15);
    expect(s.warnings).toEqual([]);
  });
});

describe('Dupire local vol', () => {
  it('equals the flat implied vol on a flat grid (limit: no smile, no term structure)', () => {
    // Dupire (1994) / Gatheral (2006) eq. (1.10): with w = σ²T, ∂_T w = σ² and no k-dependence, σ_loc = σ.
    const flat: EquityQuote = {
      currency: 'DOM',
      spot: 100,
      divYield: 0,
      vols: {
        expiries: [0.5, 1, 2, 5],
        moneyness: [0.7, 0.85, 1, 1.15, 1.3],
        vols: [0, 1, 2, 3].map(() => [0.25, 0.25, 0.25, 0.25, 0.25]),
      },
    };
    const lv = calibrateLocalVol({ name: 'F', equity: flat, curve });
    for (const row of lv.dynamics.values) for (const v of row) expect(Math.abs(v - 0.25)).toBeLessThan(2e-3);
    expect(lv.flooredCells).toBe(0);
  });

  it('is floored and counted where the surface has calendar arbitrage (∂_T w < 0)', () => {
    const s = {
      slices: [
        { expiry: 1, a: 0.04, b: 0, rho: 0, m: 0, sigma: 0.1, rmseVolPoints: 0 },
        { expiry: 2, a: 0.03, b: 0, rho: 0, m: 0, sigma: 0.1, rmseVolPoints: 0 },
      ],
      warnings: [],
      maxAbsVolPoints: 0,
    };
    expect(dupireLocalVol(s, 1.5, 0)).toEqual({ vol: 0.01, floored: true });
  });

  it('reprices the grid vanillas by Monte Carlo within 3 SE (simulation layer, local-vol scheme)', () => {
    const g = hestonGrid({
      ccy: 'DOM',
      spot: 100,
      divYield: 0.01,
      curve: curveSpec,
      heston: FO_HESTON,
      expiries: [0.5, 1, 2, 3],
      moneyness: [0.7, 0.8, 0.9, 1, 1.1, 1.2, 1.3],
    });
    const lv = calibrateLocalVol({ name: 'EQD', equity: g, curve });
    const quotes = gridQuotes(g, curve, 'g').filter(
      (q) => (q.expiry === 1 || q.expiry === 3) && q.col >= 1 && q.col <= 5,
    );
    const r = localVolRepricing({
      name: 'EQD',
      currency: 'DOM',
      equity: g,
      curve,
      curveSpec,
      dynamics: lv.dynamics,
      quotes,
      paths: FULL ? 131072 : 24576,
      seed: 'lv-check',
    });
    for (const row of r.rows) {
      const info = JSON.stringify(row);
      expect(row.sePoints, `${info}: SE cap 0.2 vol points`).toBeLessThan(0.2);
      expect(Math.abs(row.errorPoints), info).toBeLessThan(3 * row.sePoints);
    }
    expect(r.within3Se).toBe(quotes.length);
  });
});
