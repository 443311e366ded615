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
