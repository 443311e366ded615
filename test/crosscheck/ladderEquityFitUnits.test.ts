/**
 * The ladder's equity fit error counts equity quotes only. With swaption vols as the rate instruments, the
 * Black–Scholes variant refitted under Hull–White rates reprices every equity vanilla exactly (the closed form of
 * Black–Scholes under Gaussian rates: the forward's log-variance adds the bond vol and the covariance term;
 * Brigo & Mercurio 2006, hybrid chapter), so its equity vol error is zero whatever the swaption fit error is.
 */
import { describe, expect, it } from 'vitest';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import { calibrateLadder } from '../../src/engine/study/ladderCalibration.ts';
import { demoMarket } from './helpers.ts';

describe('ladder calibration reports', () => {
  it('keep swaption errors out of the equity vol error of a variant', () => {
    const market = demoMarket();
    // Lognormal swaption quotes chosen so Hull–White cannot fit them all exactly (common practice: a 2-parameter
    // model does not reproduce a whole swaption matrix).
    market.rateVols = {
      ...market.rateVols,
      DOM: {
        instrument: 'swaption',
        type: 'lognormal',
        quotes: [
          { expiry: 1, tenor: 2, vol: 0.3 },
          { expiry: 1, tenor: 1, vol: 0.36 },
          { expiry: 2, tenor: 2, vol: 0.26 },
          { expiry: 3, tenor: 1, vol: 0.24 },
        ],
      },
    };
    const deal = {
      format: 'factor-triage/deal@1',
      name: 'four-year ALDR call',
      notional: 1,
      currency: 'DOM',
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
      parameters: { strike: 4200 },
      schedules: { e: { dates: [4] } },
      events: [{ on: 'e', pay: { amount: 'max(ALDR - strike, 0)' } }],
    };
    const ladder = calibrateLadder({
      snapshot: market,
      analysis: analyseDeal(compileDeal(deal)),
      candidates: ['domesticRate'],
      required: [],
      mode: 'fair',
      scheme: 'qe',
    });
    const bsHw = ladder.variants.find((v) => v.factors.includes('domesticRate'));
    expect(bsHw, 'a variant with the stochastic domestic rate').toBeDefined();
    const swaptionRows = bsHw!.calibration.fit.filter((f) => / swaption /.test(f.instrument));
    expect(swaptionRows.length).toBeGreaterThan(0);
    expect(Math.max(...swaptionRows.map((f) => Math.abs(f.modelVol - f.marketVol)))).toBeGreaterThan(1e-4);
    expect(bsHw!.calibration.maxAbsVolError).toBeLessThan(1e-8);
  });
});
