/**
 * A foreign Heston equity through ladder and simulation: the ladder fits KESO's Heston parameters to its ASH vanilla
 * grid (COS, Fang & Oosterlee 2008); the simulation runs it under the DOM measure with the quanto drift and the ASH/DOM
 * rate. Converting the ASH call back at the simulated rate, E_d[D_d(T) X(T) C(T)] / X(0), must give the ASH price of
 * the same parameters (change of numeraire between currencies, Brigo & Mercurio 2006, Sec. 2.10 (section number from
 * memory); common practice). A wrong quanto drift sign or FX direction shows up as a bias of order ρσ_Sσ_X T.
 */
import { describe, it } from 'vitest';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import { calibrateLadder } from '../../src/engine/study/ladderCalibration.ts';
import { hestonCos } from '../../src/engine/models/hestonCos.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import type { HestonParams } from '../../src/engine/simulation/types.ts';
import { controlVariateEstimate, demoMarket, expectWithinSe, FULL, simulateChunks } from './helpers.ts';

const market = demoMarket();

describe('a foreign Heston equity fitted by the ladder reprices its own-currency vanillas under the domestic measure', () => {
  // corr(var, FX) = 0 at quarter steps; 0.3 at 1/16 steps, where the variance's own change of measure (extra drift
  // −ρ(v,X) σ_v σ_X √v under the domestic measure) matters: without it the prices come out about 10 SE high.
  it.each([
    { corrVarFx: 0, maxStep: 0.25 },
    { corrVarFx: 0.3, maxStep: 1 / 16 },
  ])(
    'KESO calls at 80 %, 100 % and 120 % of spot, 3y, converted through ASH/DOM, match COS in ASH within 3 SE (corr(var,FX) = $corrVarFx)',
    ({ corrVarFx, maxStep }) => {
      const deal = {
        format: 'factor-triage/deal@1',
        name: 'converted KESO call',
        notional: 1,
        currency: 'DOM',
        underlyings: { KESO: { kind: 'equity', currency: 'ASH' } },
        schedules: { e: { dates: [3] } },
        events: [
          { on: 'e', pay: { amount: 'max(KESO - 2350, 0)', currency: 'ASH', conversion: { kind: 'compo' } } },
        ],
      };
      const ladder = calibrateLadder({
        snapshot: market,
        analysis: analyseDeal(compileDeal(deal)),
        candidates: ['stochVol'],
        required: [],
        mode: 'fair',
        scheme: 'qe',
      });
      const fitted = ladder.variants.find((x) => x.id === 'heston')!.spec;
      const names = fitted.correlation.names;
      const iv = names.indexOf('var:KESO');
      const ix = names.indexOf('fx:ASH/DOM');
      const matrix = fitted.correlation.matrix.map((row) => row.slice());
      matrix[iv]![ix] = corrVarFx;
      matrix[ix]![iv] = corrVarFx;
      const v = { ...fitted, correlation: { names, matrix } };
      const eq = v.equities.find((e) => e.name === 'KESO')!;
      const params = eq.dynamics as HestonParams & { kind: 'heston' };
      const fx = v.fx[0]!;
      const curveAsh = makeCurve(market.curves.ASH!);
      const T = 3;
      const strikes = [0.8, 1, 1.2].map((m) => m * eq.spot);
      const nPaths = FULL ? 400_000 : 100_000;
      const ys = strikes.map(() => new Float64Array(nPaths));
      const sw = new Float64Array(nPaths);
      const w = new Float64Array(nPaths);
      let at = 0;
      simulateChunks({
        variant: v,
        eventTimes: [T],
        maxStep,
        nPaths,
        seed: 'crosscheck-foreign-heston',
        visit: (b, grid) => {
          const n = b.nPaths;
          const o = grid.indexOf(T) * n;
          const S = b.equity.KESO!;
          const X = b.fx[fx.name]!;
          for (let p = 0; p < n; p++) {
            const weight = (b.discount[o + p]! * X[o + p]!) / fx.spot;
            w[at + p] = weight;
            sw[at + p] = S[o + p]! * weight;
            strikes.forEach((K, j) => (ys[j]![at + p] = Math.max(S[o + p]! - K, 0) * weight));
          }
          at += n;
        },
      });
      const rAsh = -Math.log(curveAsh.df(T)) / T;
      strikes.forEach((K, j) => {
        const want = hestonCos({ S: eq.spot, T, r: rAsh, q: eq.divYield, params, type: 'call', K });
        // Controls: the converted forward S(T)X(T)D_d(T)/X0 (mean S0 e^{−qT}) and the converted ASH bond X(T)D_d(T)/X0
        // (mean P_ASH(0,T)); both are the same change-of-numeraire identity.
        const cv = controlVariateEstimate(
          ys[j]!,
          [sw, w],
          [eq.spot * Math.exp(-eq.divYield * T), curveAsh.df(T)],
        );
        expectWithinSe({
          label: `KESO call K = ${K} (ASH), plain MC ${cv.plainValue} ± ${cv.plainSe}`,
          computed: cv.value,
          se: cv.se,
          expected: want,
          seCap: 0.8,
          inputs: { params, fx, rAsh },
        });
      });
    },
  );
});
