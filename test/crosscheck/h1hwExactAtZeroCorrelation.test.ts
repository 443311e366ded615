/**
 * The H1-HW refit of the ladder against the full Heston–Hull–White model where the approximation is exact: with zero
 * equity–rate correlation the H1-HW characteristic function is the exact one of Heston with independent Gaussian
 * rates (Grzelak & Oosterlee 2011; shared/reference/published.md Sec. 2, "Validation ... at rho_sr = 0", where the
 * exact and H1-HW engines agree to every printed digit). So the paired Monte Carlo difference between the variants
 * heston+hw(DOM) and heston must equal the difference of their analytic model prices (H1-HW minus COS), within 3
 * paired SE. (At the snapshot's ρ = 0.15 the same comparison misses by up to 12 paired SE on 400k paths.)
 */
import { describe, it, expect } from 'vitest';
import { calibrateLadder } from '../../src/engine/study/ladderCalibration.ts';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import {
  BUILTIN_TEST_PAYOFFS,
  inProcessExecutor,
  runSimulation,
  resultStats,
} from '../../src/engine/simulation/index.ts';
import { demoMarket, expectWithinSe, FULL, readJson } from './helpers.ts';

describe('H1-HW refit at zero equity–rate correlation matches the full model on paired paths', () => {
  it('1y and 2y ALDR calls at 3780, 4200, 4620: MC(hhw) − MC(heston) = H1-HW − COS within 3 paired SE', async () => {
    const market = demoMarket();
    const deal = readJson<{ schedules: { expiry: { dates: string[] } } }>('samples/deals/european-call.json');
    deal.schedules.expiry.dates = ['2028-11-22'];
    const ladder = calibrateLadder({
      snapshot: market,
      analysis: analyseDeal(compileDeal(deal)),
      candidates: ['stochVol', 'domesticRate'],
      required: [],
      mode: 'fair',
      scheme: 'qe',
      correlationOverride: { 'eq:ALDR|rate:DOM': 0 },
    });
    const h = ladder.variants.find((v) => v.id === 'heston')!;
    const hh = ladder.variants.find((v) => v.id === 'heston+hw(DOM)')!;
    expect(hh.calibration.characteristicFunction).toBe('approximate');
    const quotes = [
      [3780, 1],
      [4200, 1],
      [4620, 1],
      [3780, 2],
      [4200, 2],
      [4620, 2],
    ] as const;
    const r = await runSimulation(
      {
        variants: [h.spec, hh.spec],
        payoff: {
          factory: BUILTIN_TEST_PAYOFFS,
          description: quotes.map(([K, T]) => ({ kind: 'call', equity: 'ALDR', strike: K, expiry: T })),
        },
        grid: { eventTimes: [1, 2], maxStep: 0.125 },
        seed: 'crosscheck-h1hw-zero-correlation',
        maxPaths: FULL ? 400_000 : 100_000,
        batchSize: 20_000,
      },
      inProcessExecutor(),
    );
    const st = resultStats(r);
    const n = quotes.length;
    quotes.forEach(([K, T], j) => {
      const row = (v: typeof h) => v.calibration.fit.find((f) => f.instrument === `ALDR K=${K} T=${T}`)!;
      // Model price = market + priceError for both variants, so the analytic difference is the difference of errors.
      const analytic = row(hh).priceError - row(h).priceError;
      const mc = st.mean(n + j) - st.mean(j);
      expectWithinSe({
        label: `paired Δ at K = ${K}, T = ${T}`,
        computed: mc,
        se: st.seOfDifference(n + j, j),
        expected: analytic,
        seCap: 0.15,
      });
    });
  });
});
