import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { runStudy, DEFAULT_SETTINGS } from '../../../src/engine/study/study.ts';
import { budgetTotal } from '../../../src/engine/study/decision.ts';
import type { MarketSnapshot } from '../../../src/engine/market/types.ts';
import type { StudySettings } from '../../../src/engine/study/types.ts';

const root = new URL('../../../', import.meta.url);
const read = (p: string) => JSON.parse(readFileSync(new URL(p, root), 'utf8'));

describe('hedge-ratio verdicts carry the step-halving part of the budget', () => {
  it('delta and rho budgets are their change on the halved grid beyond 2 SE, vega has none', async () => {
    // Full-truncation Euler on one yearly step is biased (Lord, Koekkoek & van Dijk 2010, Sec. 4), so halving the
    // step moves the one-year call's Heston price (asserted below) and gives the hedge-ratio check something to
    // measure. The rules find stochastic vol not needed for an at-the-money European: it is a candidate on request.
    const settings: StudySettings = {
      ...DEFAULT_SETTINGS,
      paths: 8192,
      firstPaths: 4096,
      batchSize: 2048,
      scheme: 'euler',
      maxStep: 1,
      sweeps: null,
      localVol: false,
      auxiliaryFraction: 0.5,
      extraCandidates: ['stochVol'],
    };
    const s = await runStudy({
      deal: read('samples/deals/european-call.json'),
      markets: [read('samples/market/demo-market.json') as MarketSnapshot],
      settings,
    });
    const gv = s.results.greekVerdicts;
    expect(gv.length).toBeGreaterThan(0);
    for (const g of gv) {
      expect(Number.isFinite(g.decision.budget) && g.decision.budget >= 0).toBe(true);
      if (g.greek === 'vega') expect(g.decision.budget).toBe(0);
    }
    for (const g of gv) {
      if (g.greek === 'vega') {
        expect(g.stepHalvingChange).toBeUndefined();
        continue;
      }
      // The budget is the change on the halved grid beyond two of its own SE, as for the price.
      const c = g.stepHalvingChange!;
      expect(c.se).toBeGreaterThan(0);
      expect(c.value).not.toBe(0);
      expect(g.decision.budget).toBe(Math.max(0, Math.abs(c.value) - 2 * c.se));
    }
    // The price carries the same check: one Euler step against two moves the call's Heston price.
    expect(s.results.stepHalving.stochVol).toBeGreaterThan(0);
    // The price verdicts' budgets are unchanged in kind: the parts add up to the total used by the rule.
    for (const v of s.verdicts) {
      const b = s.results.budgetParts?.[v.factor];
      if (v.decision && b) expect(budgetTotal(b)).toBeCloseTo(v.decision.budget, 9);
    }
    expect(s.limitations.join(' ')).toMatch(/Delta and rho carry the step-halving part/);
  }, 60_000);
});

describe('the calibration part of the budget reads the quotes the deal can depend on', () => {
  it('is |deal vega| × the two variants’ largest vol fit errors over quotes expiring by the deal’s last date', async () => {
    // A one-year call: the ladder also fits the next quoted expiry (2y) to bracket the deal's life, but the deal's
    // value cannot depend on a vol quoted for a later date (common practice: a payoff that has ended has no vega
    // to later expiries), so that row stays out of the budget.
    const settings: StudySettings = {
      ...DEFAULT_SETTINGS,
      paths: 8192,
      firstPaths: 4096,
      batchSize: 2048,
      sweeps: null,
      localVol: false,
      auxiliaryFraction: 0.5,
      extraCandidates: ['stochVol'],
    };
    const s = await runStudy({
      deal: read('samples/deals/european-call.json'),
      markets: [read('samples/market/demo-market.json') as MarketSnapshot],
      settings,
    });
    const last = 1;
    const full = s.ladder.find((v) => v.id === 'heston')!;
    const without = s.ladder.find((v) => v.id === 'bs')!;
    const errBy = (v: typeof full) =>
      Math.max(
        ...v.calibration.fit
          .filter((f) => f.mcError === null && f.expiry !== undefined && f.expiry <= last + 1e-9)
          .map((f) => Math.abs(f.modelVol - f.marketVol)),
      );
    expect(full.calibration.fit.some((f) => f.mcError === null && (f.expiry ?? 0) > last)).toBe(true);
    const vega = s.results.greeks!.find((g) => g.variant === 'heston')!.vega!.value;
    const want = Math.abs(vega) * 100 * (errBy(full) + errBy(without));
    expect(s.results.budgetParts!.stochVol!.calibration).toBeCloseTo(want, 9);
  }, 60_000);
});
