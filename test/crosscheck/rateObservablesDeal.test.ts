/**
 * The deal language's rate observables (fixing, term_rate, swap_rate, bond) on Hull–White paths, with the Hull–White
 * parameters the ladder fits to the demo snapshot's DOM caplet vols and the sloped DOM curve (inputs only), against
 * curve identities and the Hull–White closed forms of models/hullWhite.ts.
 */
import { describe, it, expect } from 'vitest';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import type { DealInput } from '../../src/engine/deal/types.ts';
import { calibrateLadder } from '../../src/engine/study/ladderCalibration.ts';
import { studyDealFactoryUrl, eventTimes } from '../../src/engine/study/studyDealFactory.ts';
import { inProcessExecutor, runSimulation, resultStats } from '../../src/engine/simulation/index.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { makeHullWhite } from '../../src/engine/models/hullWhite.ts';
import { demoMarket, expectWithinSe, FULL } from './helpers.ts';

const market = demoMarket();
const curve = makeCurve(market.curves.DOM!);
const K = 0.031;

function deal(name: string, schedules: DealInput['schedules'], events: DealInput['events']): DealInput {
  return {
    format: 'factor-triage/deal@1',
    name,
    notional: 1,
    currency: 'DOM',
    underlyings: {},
    rates: ['DOM'],
    parameters: { K },
    schedules,
    events,
  } as DealInput;
}

const deals: DealInput[] = [
  deal('floating leg', { annual: { dates: [1, 2, 3] } }, [
    { on: 'annual', pay: { amount: 'fixing(DOM) * dt' } },
  ]),
  deal('caplet', { cap: { dates: [3, 4] } }, [
    { on: 'cap', when: 'index == 2', pay: { amount: 'max(fixing(DOM) - K, 0) * dt' } },
  ]),
  deal('payer swaption', { expiry: { dates: [2] } }, [
    {
      on: 'expiry',
      pay: { amount: 'max(swap_rate(DOM, 3, 1) - K, 0) * (bond(DOM, 3) + bond(DOM, 4) + bond(DOM, 5))' },
    },
  ]),
  deal('forward rate agreement', { expiry: { dates: [2] } }, [
    { on: 'expiry', pay: { amount: 'term_rate(DOM, 1) * bond(DOM, 3)' } },
  ]),
  deal('six-month fixing', { end: { dates: [4] } }, [
    { on: 'end', pay: { amount: 'fixing(DOM, 0.5) * 0.5' } },
  ]),
];

describe('rate observables of the deal language on the ladder’s Hull–White paths', () => {
  let means: number[] = [];
  let ses: number[] = [];
  let model: ReturnType<typeof makeHullWhite>;

  async function simulate() {
    if (means.length) return;
    const compiled = deals.map((d) => compileDeal(d));
    const ladder = calibrateLadder({
      snapshot: market,
      analysis: analyseDeal(compiled[2]!),
      candidates: [],
      required: ['domesticRate'],
      mode: 'fair',
      scheme: 'qe',
    });
    const v = ladder.variants[0]!.spec;
    expect(v.rates.DOM!.hw, 'the variant has a stochastic DOM rate').toBeDefined();
    model = makeHullWhite(curve, v.rates.DOM!.hw!);
    const description = { deals: compiled };
    const r = await runSimulation(
      {
        variants: [v],
        payoff: { factory: studyDealFactoryUrl(), description },
        grid: { eventTimes: eventTimes(description), maxStep: 0.25 },
        seed: 'crosscheck-rate-observables',
        maxPaths: FULL ? 400_000 : 100_000,
        batchSize: 20_000,
      },
      inProcessExecutor(),
    );
    const st = resultStats(r);
    means = deals.map((_, i) => st.mean(i));
    ses = deals.map((_, i) => st.se(i));
  }

  it('a floating leg of annual fixings paid at their natural dates is worth 1 − P(0,3) (replication; common practice)', async () => {
    await simulate();
    expectWithinSe({
      label: 'floating leg',
      computed: means[0]!,
      se: ses[0]!,
      expected: 1 - curve.df(3),
      seCap: 5e-4,
    });
  });

  it('a caplet written with fixing() matches the Hull–White caplet (Brigo & Mercurio 2006, eq. 3.41)', async () => {
    await simulate();
    const want = model.caplet({ type: 'cap', T1: 3, T2: 4, strike: K });
    expectWithinSe({ label: 'caplet 3y×1y', computed: means[1]!, se: ses[1]!, expected: want, seCap: 1e-4 });
  });

  it('a payer swaption written with swap_rate() and bond() matches Jamshidian’s decomposition (Jamshidian 1989)', async () => {
    await simulate();
    const want = model.swaption({ type: 'payer', expiry: 2, payTimes: [3, 4, 5], strike: K });
    expectWithinSe({
      label: 'payer swaption 2y×3y',
      computed: means[2]!,
      se: ses[2]!,
      expected: want,
      seCap: 2e-4,
    });
  });

  it('a forward rate agreement with term_rate() is worth P(0,2) − P(0,3), and fixing(C, τ) gives P(0,3.5) − P(0,4)', async () => {
    await simulate();
    expectWithinSe({
      label: 'FRA',
      computed: means[3]!,
      se: ses[3]!,
      expected: curve.df(2) - curve.df(3),
      seCap: 2e-4,
    });
    expectWithinSe({
      label: 'six-month fixing',
      computed: means[4]!,
      se: ses[4]!,
      expected: curve.df(3.5) - curve.df(4),
      seCap: 1e-4,
    });
  });
});
