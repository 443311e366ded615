import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import { applyRules, candidateFactors, requiredFactors } from '../../../src/engine/study/rules.ts';
import type { DealAnalysis, Finding } from '../../../src/engine/deal/types.ts';

const no: Finding = { present: false, reason: '' };
const yes = (reason: string): Finding => ({ present: true, reason });

/** A hand-written analysis of a deal, with overrides (the shapes follow src/engine/deal/types.ts). */
function analysis(over: Partial<DealAnalysis>): DealAnalysis {
  return {
    format: 'factor-triage/deal-analysis@1',
    name: 'hand-written',
    currency: 'DOM',
    currencies: ['DOM'],
    equities: [{ id: 'ALDR', marketName: 'ALDR', currency: 'DOM' }],
    fx: [],
    observables: [],
    rateDependent: no,
    rates: [],
    fxDependent: no,
    crossCurrency: no,
    compo: no,
    quanto: no,
    pathDependent: no,
    earlyTermination: no,
    exercise: { ...no, holders: [], times: [] },
    lastTime: 1,
    gridTimes: [1],
    fundingSpread: 0,
    reasons: [],
    ...over,
  };
}

describe('rules', () => {
  // Breeden & Litzenberger (1978): a payoff of S_T alone is spanned by vanillas at T, so stochastic vol adds nothing
  // once the model matches those vanillas; a short European reads no rate.
  it('a one-year European on one equity needs neither stochastic vol nor stochastic rates', () => {
    const r = applyRules(analysis({}));
    expect(r.factors.map((f) => f.status)).toEqual(['notNeeded', 'notNeeded', 'notNeeded']);
    expect(candidateFactors(r)).toEqual([]);
    expect(r.factors[0]!.reason).toMatch(/replicated by the vanillas/);
  });
  // DESIGN step 3 (common practice): a cap, floor or digital on a rate is non-linear in it → stochastic rates required.
  it('a non-linear rate payoff requires stochastic domestic rates', () => {
    const r = applyRules(
      analysis({
        rateDependent: yes('reads the DOM fixing'),
        rates: [
          {
            currency: 'DOM',
            linearAtNaturalDate: false,
            nonLinear: yes('max(fixing − 3%, 0): a cap'),
            timingMismatch: no,
            reason: 'cap',
          },
        ],
      }),
    );
    expect(requiredFactors(r)).toEqual(['domesticRate']);
    expect(r.factors[1]!.reason).toMatch(/cap/);
  });
  // DESIGN step 3: a linear floating coupon paid at its natural date is replicated by the curve.
  it('linear floating coupons at their natural dates do not need stochastic rates', () => {
    const r = applyRules(
      analysis({
        rates: [
          { currency: 'DOM', linearAtNaturalDate: true, nonLinear: no, timingMismatch: no, reason: 'linear' },
        ],
        lastTime: 3,
      }),
    );
    expect(r.factors[1]!.status).toBe('notNeeded');
    expect(r.factors[1]!.reason).toMatch(/curve/);
  });
  it('long maturity makes rates a candidate; path dependence makes stochastic vol a candidate', () => {
    const r = applyRules(analysis({ lastTime: 10, pathDependent: yes('reads the running maximum') }));
    expect(candidateFactors(r)).toEqual(['stochVol', 'domesticRate']);
  });
  it('a short autocallable keeps stochastic vol as candidate but not rates (last date below the setting)', () => {
    const r = applyRules(
      analysis({ lastTime: 1, earlyTermination: yes('autocall'), pathDependent: yes('autocall') }),
    );
    expect(candidateFactors(r)).toEqual(['stochVol']);
    const longer = applyRules(analysis({ lastTime: 1, earlyTermination: yes('autocall') }), {
      rateCandidateMaturity: 5,
      terminationRateMaturity: 0.5,
      volCandidateMaturity: 30,
    });
    expect(candidateFactors(longer)).toEqual(['stochVol', 'domesticRate']);
  });
  // DESIGN step 3: a quanto payoff always carries the quanto drift; a compo payoff needs FX vol.
  it('notes the quanto drift and makes the foreign rate a candidate for an FX-linked deal', () => {
    const r = applyRules(
      analysis({
        currencies: ['DOM', 'ASH'],
        equities: [{ id: 'BRIX', marketName: 'BRIX', currency: 'ASH' }],
        quanto: yes('BRIX paid in DOM at a fixed rate'),
        crossCurrency: yes('BRIX is quoted in ASH'),
        lastTime: 6,
      }),
    );
    expect(r.notes.join(' ')).toMatch(/quanto drift/);
    expect(candidateFactors(r)).toEqual(['stochVol', 'domesticRate', 'foreignRate']);
  });
  it('gives every factor a reason', () => {
    for (const f of applyRules(analysis({ lastTime: 7 })).factors) expect(f.reason.length).toBeGreaterThan(5);
  });
});

describe('rules on the sample deals (analysed by the deal layer)', () => {
  const read = (f: string) =>
    JSON.parse(readFileSync(new URL(`../../../samples/deals/${f}`, import.meta.url), 'utf8')) as unknown;
  const rulesOf = (f: string) => applyRules(analyseDeal(compileDeal(read(f))));
  const status = (f: string) => Object.fromEntries(rulesOf(f).factors.map((x) => [x.factor, x.status]));
  // Breeden & Litzenberger (1978): one-date payoff on one equity is spanned by its vanillas.
  it('the European call needs neither factor', () => {
    expect(status('european-call.json')).toEqual({
      stochVol: 'notNeeded',
      domesticRate: 'notNeeded',
      foreignRate: 'notNeeded',
    });
  });
  // DESIGN step 3: long maturity makes rates a candidate even for linear coupons; path dependence makes vol one.
  it('the twelve-year note makes rates and stochastic vol candidates', () => {
    expect(status('long-dated-floating-note.json')).toMatchObject({
      stochVol: 'candidate',
      domesticRate: 'candidate',
    });
  });
  // DESIGN step 3: a quanto payoff carries the quanto drift in every variant.
  it('the quanto worst-of notes the quanto drift', () => {
    expect(rulesOf('worst-of-quanto.json').notes.join(' ')).toMatch(/quanto drift/);
  });
  // DESIGN step 3: a payoff on an equity and a rate together is not spanned by the equity's vanillas.
  it('the equity–rate best-of makes stochastic vol a candidate and requires stochastic rates', () => {
    expect(status('equity-rate-best-of.json')).toMatchObject({
      stochVol: 'candidate',
      domesticRate: 'required',
    });
  });
  it('the cliquet makes stochastic vol a candidate', () => {
    expect(status('cliquet-capped-floored.json').stochVol).toBe('candidate');
  });
});
