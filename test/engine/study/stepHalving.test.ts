import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { runStepHalving } from '../../../src/engine/study/stepHalving.ts';
import { calibrateLadder } from '../../../src/engine/study/ladderCalibration.ts';
import { compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';

const read = (p: string) => JSON.parse(readFileSync(new URL(`../../../${p}`, import.meta.url), 'utf8'));

describe('step halving on the same random numbers', () => {
  // Black–Scholes log steps and the Hull–White joint Gaussian steps are exact (Glasserman 2004, Monte Carlo Methods
  // in Financial Engineering, Sec. 3.2–3.3), so a European's value does not depend on the grid: the change of Δ
  // between the grid and the halved grid is zero up to Monte Carlo noise.
  it('finds no discretisation change for exact schemes, and the paired noise is small', async () => {
    const market = read('samples/market/demo-market.json');
    const deal = compileDeal(read('samples/deals/european-call.json'));
    const l = calibrateLadder({
      snapshot: market,
      analysis: analyseDeal(deal),
      candidates: ['domesticRate'],
      required: [],
      mode: 'fair',
      scheme: 'qe',
    });
    const r = await runStepHalving({
      variants: l.variants.map((v) => v.spec),
      deal,
      eventTimes: deal.gridTimes,
      maxStep: 0.25,
      seed: 'step-halving-test',
      paths: 16384,
      batchSize: 4096,
    });
    const st = columnStats(r.sums);
    // columns: coarse bs, coarse bs+hw, fine bs, fine bs+hw; change of Δ = (fine Δ) − (coarse Δ)
    const w = [1, -1, -1, 1];
    const change = st.meanOfCombination(w);
    const se = st.seOfCombination(w);
    expect(Math.abs(change), `change ${change}, SE ${se}`).toBeLessThanOrEqual(3 * se);
    // the coarse and fine paths share their Brownian increments, so the change is far more precise than Δ itself
    expect(se).toBeLessThan(0.5 * st.seOfDifference(1, 0));
  });
});

describe('step halving of bumped scenarios', () => {
  it('adds the spot and rate bumps without changing the base columns; an exact scheme shows no delta change', async () => {
    const market = read('samples/market/demo-market.json');
    const deal = compileDeal(read('samples/deals/european-call.json'));
    const l = calibrateLadder({
      snapshot: market,
      analysis: analyseDeal(deal),
      candidates: ['domesticRate'],
      required: [],
      mode: 'fair',
      scheme: 'qe',
    });
    const common = {
      variants: l.variants.map((v) => v.spec),
      deal,
      eventTimes: deal.gridTimes,
      maxStep: 0.25,
      seed: 'step-halving-bumps',
      paths: 8192,
      batchSize: 4096,
    };
    const base = await runStepHalving(common);
    const scenarios = [
      {},
      { spotScale: { ALDR: 1.01 } },
      { spotScale: { ALDR: 0.99 } },
      { rateShift: { DOM: 1e-4 } },
      { rateShift: { DOM: -1e-4 } },
    ];
    const bumped = await runStepHalving({ ...common, scenarios });
    const V = common.variants.length;
    const S = scenarios.length;
    const a = columnStats(base.sums);
    const b = columnStats(bumped.sums);
    // Column g·V·S + v·S + s: the base scenario of every (grid, variant) is the run without scenarios, bit for bit.
    for (let g = 0; g < 2; g++)
      for (let v = 0; v < V; v++) {
        expect(b.mean(g * V * S + v * S)).toBe(a.mean(g * V + v));
        expect(b.se(g * V * S + v * S)).toBe(a.se(g * V + v));
      }
    // Black–Scholes log steps are exact (Glasserman 2004, Sec. 3.2), so the bump-and-revalue delta of the European
    // does not depend on the grid: (fine − coarse) of (up − down) is zero within 3 SE, for each variant.
    for (let v = 0; v < V; v++) {
      const w = new Array<number>(2 * V * S).fill(0);
      w[v * S + 1] = -1;
      w[v * S + 2] = 1;
      w[V * S + v * S + 1] = 1;
      w[V * S + v * S + 2] = -1;
      const change = b.meanOfCombination(w);
      const se = b.seOfCombination(w);
      const upDown = new Array<number>(2 * V * S).fill(0);
      upDown[v * S + 1] = 1;
      upDown[v * S + 2] = -1;
      // Under Black–Scholes both grids end on the same terminal level up to rounding (SE 0): allow rounding.
      const rounding = 1e-12 * Math.abs(b.meanOfCombination(upDown));
      expect(Math.abs(change), `variant ${v}: delta change ${change}, SE ${se}`).toBeLessThanOrEqual(
        3 * se + rounding,
      );
    }
  });
});
