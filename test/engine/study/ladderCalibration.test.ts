import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import { calibrateLadder } from '../../../src/engine/study/ladderCalibration.ts';
import { makeDriverLayout, makeTimeGrid, prepareVariant } from '../../../src/engine/simulation/index.ts';
import { bsHullWhite } from '../../../src/engine/models/bsHullWhite.ts';
import { makeCurve } from '../../../src/engine/market/curve.ts';
import { gridVolAt } from '../../../src/engine/calibration/volGrid.ts';
import { blackUndiscounted } from '../../../src/engine/models/blackScholes.ts';

const read = (p: string) => JSON.parse(readFileSync(new URL(`../../../${p}`, import.meta.url), 'utf8'));

describe('calibrated ladder', () => {
  const market = read('samples/market/demo-market.json');
  const a = analyseDeal(compileDeal(read('samples/deals/long-dated-floating-note.json')));
  const l = calibrateLadder({
    snapshot: market,
    analysis: a,
    candidates: ['stochVol', 'domesticRate'],
    required: [],
    mode: 'fair',
    scheme: 'qe',
  });
  it('has one valid variant per subset of the candidates', () => {
    expect(l.variants.map((v) => v.id)).toEqual(['bs', 'heston', 'bs+hw(DOM)', 'heston+hw(DOM)']);
    const grid = makeTimeGrid(a.gridTimes, 0.25);
    const layout = makeDriverLayout(l.variants.map((v) => v.spec));
    for (const v of l.variants) expect(() => prepareVariant(v.spec, grid, layout)).not.toThrow();
  });
  // Rabinovitch (1989); Brigo & Mercurio (2006) Ch. 13–14: the refitted Black–Scholes–Hull–White variant prices each
  // ATM-forward target at its market vol (Black on the forward with the Gaussian-rate variance).
  it('refits Black–Scholes under Hull–White so every target vanilla keeps its market price', () => {
    const v = l.variants.find((x) => x.id === 'bs+hw(DOM)')!.spec;
    const e = v.equities[0]!;
    if (e.dynamics.kind !== 'bs') throw new Error('bs expected');
    const curve = makeCurve(market.curves.DOM);
    const q = market.equities.ALDR;
    const n = v.correlation.names;
    const rho = v.correlation.matrix[n.indexOf('eq:ALDR')]![n.indexOf('rate:DOM')]!;
    for (const T of e.dynamics.volTimes) {
      const F = (q.spot * Math.exp(-q.divYield * T)) / curve.df(T);
      const mkt = curve.df(T) * blackUndiscounted('call', F, F, gridVolAt(q, curve, T, F) * Math.sqrt(T));
      const px = bsHullWhite({
        type: 'call',
        S: q.spot,
        K: F,
        T,
        q: q.divYield,
        curve,
        vol: e.dynamics,
        hw: v.rates.DOM!.hw!,
        rho,
      }).price;
      expect(Math.abs(px - mkt), `T=${T}: model ${px}, market ${mkt}`).toBeLessThan(1e-8 * q.spot);
    }
  });
});

describe('ladder correlation check', () => {
  // Higham (2002), Computing the nearest correlation matrix: a matrix that is not positive semi-definite is
  // refused and the nearest valid one is offered, never applied silently (DESIGN, numerical choices).
  it("refuses a correlation that is not PSD over a variant's drivers and offers the nearest valid one", async () => {
    const { calibrateLadder } = await import('../../../src/engine/study/ladderCalibration.ts');
    const market = JSON.parse(
      readFileSync(new URL('../../../samples/market/demo-market.json', import.meta.url), 'utf8'),
    );
    const n = market.correlation.names as string[];
    const i = n.indexOf('eq:ALDR');
    const j = n.indexOf('rate:DOM');
    market.correlation.matrix[i][j] = 0.9;
    market.correlation.matrix[j][i] = 0.9;
    const deal = JSON.parse(
      readFileSync(new URL('../../../samples/deals/european-call.json', import.meta.url), 'utf8'),
    );
    const a = analyseDeal(compileDeal(deal));
    // With ρ(S,v) ≈ −0.68 fitted, ρ(S,r) = 0.9 and ρ(v,r) = 0, det = 1 − 0.68² − 0.9² < 0.
    expect(() =>
      calibrateLadder({
        snapshot: market,
        analysis: a,
        candidates: ['stochVol', 'domesticRate'],
        required: [],
        mode: 'fair',
        scheme: 'qe',
      }),
    ).toThrow(/positive semi-definite.*nearest valid matrix/);
  });
});
