import { describe, it, expect } from 'vitest';
import { bsGreeks } from '../../../src/engine/models/blackScholes.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import { bsDyn, expectWithinSe, flatRate, oneEquity, run, spec } from './helpers.ts';

describe('path shifts give Greeks without new simulation', () => {
  it('central spot and rate shifts reproduce Black–Scholes delta and the Haug rho', async () => {
    // Haug (1998), pp. 11–16 (QuantLib europeanoption.cpp; published.md): call S=72, K=75, q=0, r=9%, T=1, vol=19%,
    // rho = 38.7325 per 1.00 of r. Delta from the models layer's closed form (second method).
    const v = oneEquity({ spot: 72, r: 0.09, dynamics: bsDyn(0.19) });
    const h = 1e-4;
    const r = await run(
      spec([v], [{ kind: 'call', equity: 'A', strike: 75, expiry: 1 }], {
        maxStep: 1,
        paths: 40_000,
        scenarios: [
          {},
          { spotScale: { A: 1.01 } },
          { spotScale: { A: 0.99 } },
          { rateShift: { DOM: h } },
          { rateShift: { DOM: -h } },
        ],
      }),
    );
    const st = columnStats(r.sums);
    const delta = (st.mean(1) - st.mean(2)) / (2 * 0.72);
    const seDelta = st.seOfDifference(1, 2) / (2 * 0.72);
    const exactDelta = bsGreeks({ type: 'call', S: 72, K: 75, T: 1, r: 0.09, q: 0, vol: 0.19 }).delta;
    expect(
      Math.abs(delta - exactDelta),
      `delta ${delta} ± ${seDelta}, exact ${exactDelta}`,
    ).toBeLessThanOrEqual(3 * seDelta + 1e-3);
    expect(seDelta).toBeLessThan(0.01);
    const rho = (st.mean(3) - st.mean(4)) / (2 * h);
    const seRho = st.seOfDifference(3, 4) / (2 * h);
    expect(Math.abs(rho - 38.7325), `rho ${rho} ± ${seRho}`).toBeLessThanOrEqual(3 * seRho + 0.01);
    expect(seRho).toBeLessThan(0.5);
  });

  it('a spot scale under Heston QE equals a re-simulation from the scaled spot', async () => {
    // Exactness claim: the Heston log dynamics do not depend on the level (common practice).
    const dyn = { kind: 'heston' as const, v0: 0.04, kappa: 2, theta: 0.05, sigma: 0.6, rho: -0.7 };
    const pay = [{ kind: 'call' as const, equity: 'A', strike: 100, expiry: 2 }];
    const a = await run(
      spec([oneEquity({ spot: 100, r: 0.02, dynamics: dyn })], pay, {
        maxStep: 0.25,
        paths: 4000,
        scenarios: [{ spotScale: { A: 1.03 } }],
      }),
    );
    const b = await run(
      spec([oneEquity({ spot: 103, r: 0.02, dynamics: dyn })], pay, { maxStep: 0.25, paths: 4000 }),
    );
    expect(a.sums.mean[0]!).toBeCloseTo(b.sums.mean[0]!, 9);
  });

  it('a parallel rate shift under Hull–White equals a re-simulation on the shifted curve', async () => {
    // Exactness claim: a parallel curve shift adds δ to φ and leaves x unchanged (Brigo & Mercurio 2006, Sec. 3.3).
    const hw = { a: 0.05, sigma: 0.01 };
    const pay = [
      { kind: 'call' as const, equity: 'A', strike: 100, expiry: 3 },
      { kind: 'caplet' as const, fixing: 2, payment: 3, strike: 0.03 },
    ];
    const base = oneEquity({ spot: 100, r: 0.03, dynamics: bsDyn(0.2), hw, rhoSr: 0.3 });
    const a = await run(
      spec([base], pay, { maxStep: 0.25, paths: 4000, scenarios: [{ rateShift: { DOM: 0.002 } }] }),
    );
    const moved = { ...base, rates: { DOM: flatRate('DOM', 0.032, hw) } };
    const b = await run(spec([moved], pay, { maxStep: 0.25, paths: 4000 }));
    expect(a.sums.mean[0]!).toBeCloseTo(b.sums.mean[0]!, 8);
    expect(a.sums.mean[1]!).toBeCloseTo(b.sums.mean[1]!, 10);
  });

  it('a rate shift moves a Hull–White zero-coupon bond by exactly e^{−δT}', async () => {
    const v = oneEquity({ spot: 100, r: 0.04, dynamics: bsDyn(0.2), hw: { a: 0.1, sigma: 0.01 } });
    const r = await run(
      spec([v], [{ kind: 'zcb', maturity: 4, observe: 2 }], {
        maxStep: 0.5,
        paths: 20_000,
        scenarios: [{}, { rateShift: { DOM: 0.01 } }],
      }),
    );
    expectWithinSe(r, 0, Math.exp(-0.16), 0.001, 'ZCB base');
    expectWithinSe(r, 1, Math.exp(-0.2), 0.001, 'ZCB shifted');
  });
});
