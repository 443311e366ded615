/**
 * Quanto drift sign and FX quote direction through every layer a study uses: the ladder builds the Black–Scholes
 * variant from the demo snapshot (KESO in ASH, ASH/DOM quoted as DOM per ASH, its equity–FX correlation), the deal
 * language converts the payments, the study's payoff factory evaluates them on the simulation runner's paths. The
 * expected values are closed forms on the variant's own calibrated parameters (the snapshot is an input, not an
 * oracle).
 */
import { describe, it, expect } from 'vitest';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import type { DealInput } from '../../src/engine/deal/types.ts';
import { calibrateLadder } from '../../src/engine/study/ladderCalibration.ts';
import { studyDealFactoryUrl, eventTimes } from '../../src/engine/study/studyDealFactory.ts';
import { inProcessExecutor, runSimulation, resultStats } from '../../src/engine/simulation/index.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { blackUndiscounted } from '../../src/engine/models/blackScholes.ts';
import type { VariantSpec } from '../../src/engine/simulation/types.ts';
import { demoMarket, expectWithinSe, FULL } from './helpers.ts';

const market = demoMarket();
const T = 2;
const K = 2350;
const fixedRate = 1.37;

function deal(name: string, events: DealInput['events']): DealInput {
  return {
    format: 'factor-triage/deal@1',
    name,
    notional: 1,
    currency: 'DOM',
    underlyings: {
      KESO: { kind: 'equity', currency: 'ASH' },
      XD: { kind: 'fx', units: 'DOM', per: 'ASH' },
      XA: { kind: 'fx', units: 'ASH', per: 'DOM' },
    },
    parameters: { K, KD: K * fixedRate, KX: 1.37 },
    schedules: { expiry: { dates: [T] } },
    events,
  } as DealInput;
}

const deals: DealInput[] = [
  // 0: quanto call: the ASH payoff converted at the fixed rate.
  deal('quanto call', [
    {
      on: 'expiry',
      pay: { amount: 'max(KESO - K, 0)', currency: 'ASH', conversion: { kind: 'quanto', rate: fixedRate } },
    },
  ]),
  // 1: compo call: the DOM value of KESO struck in DOM.
  deal('compo call', [{ on: 'expiry', pay: { amount: 'max(KESO * XD - KD, 0)' } }]),
  // 2: foreign call paid in ASH, converted at the FX rate on the payment date.
  deal('converted foreign call', [
    { on: 'expiry', pay: { amount: 'max(KESO - K, 0)', currency: 'ASH', conversion: { kind: 'compo' } } },
  ]),
  // 3: an FX call on DOM per ASH written through the inverse quote (ASH per DOM).
  deal('FX call, inverse quote', [{ on: 'expiry', pay: { amount: 'max(1 / XA - KX, 0)' } }]),
];

/** ∫_0^T σ(u)^p du for the contract's piecewise vols (σ_i on (t_{i−1}, t_i], flat after the last). */
function volIntegral(d: { volTimes: number[]; vols: number[] }, p: 1 | 2): number {
  let s = 0;
  let lo = 0;
  for (let i = 0; i < d.vols.length && lo < T; i++) {
    const hi = i === d.vols.length - 1 ? T : Math.min(d.volTimes[i]!, T);
    if (hi > lo) s += d.vols[i]! ** p * (hi - lo);
    lo = Math.max(lo, hi);
  }
  return s;
}

describe('quanto and compo payments on the demo snapshot, through ladder, deal language and runner', () => {
  let variant: VariantSpec;
  let means: number[] = [];
  let ses: number[] = [];

  async function simulate() {
    if (means.length) return;
    const compiled = deals.map((d) => compileDeal(d));
    const analysis = analyseDeal(compiled[0]!);
    const ladder = calibrateLadder({
      snapshot: market,
      analysis,
      candidates: [],
      required: [],
      mode: 'fair',
      scheme: 'qe',
    });
    variant = ladder.variants[0]!.spec;
    const description = { deals: compiled };
    const r = await runSimulation(
      {
        variants: [variant],
        payoff: { factory: studyDealFactoryUrl(), description },
        grid: { eventTimes: eventTimes(description), maxStep: 0.5 },
        seed: 'crosscheck-quanto-compo',
        maxPaths: FULL ? 524_288 : 131_072,
        batchSize: 16_384,
      },
      inProcessExecutor(),
    );
    const st = resultStats(r);
    means = deals.map((_, i) => st.mean(i));
    ses = deals.map((_, i) => st.se(i));
  }

  function inputs() {
    const eq = variant.equities.find((e) => e.name === 'KESO')!;
    if (eq.dynamics.kind !== 'bs') throw new Error('expected Black–Scholes dynamics');
    const fx = variant.fx[0]!;
    const names = variant.correlation.names;
    const rho = variant.correlation.matrix[names.indexOf('eq:KESO')]![names.indexOf(`fx:${fx.name}`)]!;
    const Pd = makeCurve(market.curves.DOM!).df(T);
    const Pf = makeCurve(market.curves.ASH!).df(T);
    return {
      S: eq.spot,
      q: eq.divYield,
      intVar: volIntegral(eq.dynamics, 2),
      intVol: volIntegral(eq.dynamics, 1),
      X0: fx.spot,
      sX: fx.vol,
      rho,
      Pd,
      Pf,
      fxName: fx.name,
    };
  }

  it('the ladder reads the snapshot FX as DOM per ASH with its equity–FX correlation', async () => {
    await simulate();
    const i = inputs();
    // Snapshot: "ASH/DOM" foreign ASH, domestic DOM, spot 1.37, vol 9 %; correlation eq:KESO–fx:ASH/DOM = −0.2.
    expect(i.X0).toBe(market.fx!['ASH/DOM']!.spot);
    expect(i.sX).toBe(market.fx!['ASH/DOM']!.vol);
    const n = market.correlation.names;
    expect(i.rho).toBe(market.correlation.matrix[n.indexOf('eq:KESO')]![n.indexOf('fx:ASH/DOM')]!);
  });

  it('a quanto call at a fixed rate matches the quanto closed form with drift −ρσ_Sσ_X, and not the opposite sign', async () => {
    await simulate();
    const i = inputs();
    // Haug (1998), fixed exchange-rate foreign equity options (quanto), pp. 105–106 (page from published.md):
    // Ē P_d(T) Black(F_Q, K, √∫σ_S²), F_Q = S e^{−qT}/P_f(T) · exp(−ρ σ_X ∫σ_S) (time-dependent σ_S: common practice).
    const quanto = (sign: number) =>
      fixedRate *
      i.Pd *
      blackUndiscounted(
        'call',
        ((i.S * Math.exp(-i.q * T)) / i.Pf) * Math.exp(-sign * i.rho * i.sX * i.intVol),
        K,
        Math.sqrt(i.intVar),
      );
    expectWithinSe({
      label: 'quanto call',
      computed: means[0]!,
      se: ses[0]!,
      expected: quanto(1),
      seCap: 2.5,
      inputs: i,
    });
    const wrong = quanto(-1);
    expect(
      Math.abs(means[0]! - wrong),
      `the run must resolve the sign of the drift: wrong-sign value ${wrong}, computed ${means[0]} ± ${ses[0]}`,
    ).toBeGreaterThan(3 * ses[0]!);
  });

  it('a compo call (struck in DOM on KESO·X) matches Black–Scholes on S·X with σ² = σ_S² + σ_X² + 2ρσ_Sσ_X', async () => {
    await simulate();
    const i = inputs();
    // Haug (1998), foreign equity option struck in domestic currency (section and page from memory): the DOM price
    // S·X is lognormal with the combined vol, forward S X0 e^{−qT}/P_d(T).
    const v = i.intVar + i.sX * i.sX * T + 2 * i.rho * i.sX * i.intVol;
    const want =
      i.Pd * blackUndiscounted('call', (i.S * i.X0 * Math.exp(-i.q * T)) / i.Pd, K * fixedRate, Math.sqrt(v));
    expectWithinSe({
      label: 'compo call',
      computed: means[1]!,
      se: ses[1]!,
      expected: want,
      seCap: 3.5,
      inputs: i,
    });
  });

  it('a foreign call converted at the payment-date rate is worth X0 times its ASH price', async () => {
    await simulate();
    const i = inputs();
    // X(T)·C_f(T) in DOM: X·(value in ASH)/B_d is a martingale, so the DOM value is X0 · C_f(0) (change of numeraire
    // between currencies, Brigo & Mercurio 2006, Sec. 2.10 (section number from memory); Haug (1998) lists it as a
    // foreign equity option struck in foreign currency).
    const want =
      i.X0 * i.Pf * blackUndiscounted('call', (i.S * Math.exp(-i.q * T)) / i.Pf, K, Math.sqrt(i.intVar));
    expectWithinSe({
      label: 'converted foreign call',
      computed: means[2]!,
      se: ses[2]!,
      expected: want,
      seCap: 2.5,
      inputs: i,
    });
  });

  it('an FX call written through the inverse quote matches Garman–Kohlhagen on DOM per ASH', async () => {
    await simulate();
    const i = inputs();
    // Garman & Kohlhagen (1983): P_d(T) Black(X0 P_f(T)/P_d(T), K, σ_X√T), X in DOM per ASH.
    const want = i.Pd * blackUndiscounted('call', (i.X0 * i.Pf) / i.Pd, 1.37, i.sX * Math.sqrt(T));
    expectWithinSe({
      label: 'FX call',
      computed: means[3]!,
      se: ses[3]!,
      expected: want,
      seCap: 5e-4,
      inputs: i,
    });
  });
});
