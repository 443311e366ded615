import { describe, it, expect } from 'vitest';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import { makeDriverLayout } from '../../../src/engine/simulation/drivers.ts';
import { bsDyn, oneEquity, run, spec } from './helpers.ts';

const bs = oneEquity({ id: 'bs', spot: 100, r: 0.03, dynamics: bsDyn(0.2), rhoSr: 0.3 });
const bshw = oneEquity({
  id: 'bshw',
  spot: 100,
  r: 0.03,
  dynamics: bsDyn(0.2),
  hw: { a: 0.05, sigma: 0.01 },
  rhoSr: 0.3,
});
const call = [{ kind: 'call' as const, equity: 'A', strike: 100, expiry: 5 }];

describe('common random numbers pair the paths of adjacent variants', () => {
  it('orders drivers equities, variances, rates, FX across the union of variants', () => {
    const h = oneEquity({
      id: 'h',
      spot: 100,
      r: 0.03,
      dynamics: { kind: 'heston', v0: 0.04, kappa: 1, theta: 0.04, sigma: 0.3, rho: -0.5 },
      hw: { a: 0.05, sigma: 0.01 },
    });
    const layout = makeDriverLayout([bs, h]);
    expect(layout.names).toEqual(['eq:A', 'var:A', 'rate:DOM']);
    // A Hull–White rate takes three normals per step (its increment and two for the exact (x, ∫x) step).
    expect(layout.width).toBe(5);
  });

  it('the variance of BS − BS-HW is at least 10 times smaller than with independent streams', async () => {
    // Property of paired sampling (Glasserman 2003, Sec. 4.2 on common random numbers; common practice).
    const paired = await run(spec([bs, bshw], call, { maxStep: 0.5, paths: 20_000 }));
    const st = columnStats(paired.sums);
    const varPaired = st.variance(0) + st.variance(1) - 2 * st.covariance(0, 1);
    const a = await run(spec([bs], call, { maxStep: 0.5, paths: 20_000, seed: 1 }));
    const b = await run(spec([bshw], call, { maxStep: 0.5, paths: 20_000, seed: 2 }));
    const varIndep = columnStats(a.sums).variance(0) + columnStats(b.sums).variance(0);
    const ratio = varIndep / varPaired;
    expect(ratio, `independent ${varIndep}, paired ${varPaired}`).toBeGreaterThanOrEqual(10);
    expect(st.seOfDifference(0, 1)).toBeCloseTo(Math.sqrt(varPaired / paired.paths), 12);
  });

  it('a variant reads the same equity normals whether or not other variants are in the run', async () => {
    const alone = await run(spec([bs], call, { maxStep: 0.5, paths: 4000 }));
    const withOther = await run(spec([bs, bshw], call, { maxStep: 0.5, paths: 4000 }));
    expect(withOther.sums.mean[0]).toBe(alone.sums.mean[0]);
  });

  it('antithetic pairs reduce the variance of a call estimate', async () => {
    const plain = await run(spec([bs], call, { maxStep: 5, paths: 20_000 }));
    const anti = await run(spec([bs], call, { maxStep: 5, paths: 20_000, antithetic: true }));
    // Antithetic sampling of a monotone payoff lowers the variance of the mean (Glasserman 2003, Sec. 4.2; common practice).
    expect(columnStats(anti.sums).se(0)).toBeLessThan(columnStats(plain.sums).se(0));
  });
});
