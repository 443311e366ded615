import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { checkDeal, compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { makeDealEvaluator, makeDealRunner } from '../../../src/engine/deal/dealEvaluator.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import type { CompiledDeal, DealInput } from '../../../src/engine/deal/types.ts';
import type { PathBatch } from '../../../src/engine/simulation/types.ts';
import { bsPrice } from '../../../src/engine/models/blackScholes.ts';
import { formatIsoDate, parseIsoDate } from '../../../src/engine/market/dates.ts';
import { makeTestBatch, meanSe } from './testPaths.ts';

const read = (f: string): DealInput =>
  JSON.parse(readFileSync(new URL(`../../../samples/deals/${f}`, import.meta.url), 'utf8')) as DealInput;
const sample = (): DealInput =>
  JSON.parse(
    readFileSync(
      new URL('../../../samples/deals/autocallable-memory-seasoned.json', import.meta.url),
      'utf8',
    ),
  ) as DealInput;

/** Paths that stay at one level each (path p at levels[p] on every grid date), no discounting, flat bonds. */
function flatBatch(c: CompiledDeal, levels: number[]): PathBatch {
  const times = Float64Array.from([0, ...c.gridTimes]);
  const n = levels.length;
  const a = new Float64Array(times.length * n);
  for (let k = 0; k < times.length; k++) for (let p = 0; p < n; p++) a[k * n + p] = levels[p]!;
  return {
    nPaths: n,
    times,
    equity: { ALDR: a },
    variance: {},
    fx: {},
    shortRate: { DOM: new Float64Array(times.length * n) },
    discount: new Float64Array(times.length * n).fill(1),
    bond: (_c, _k, _T, out) => void out.fill(1),
  };
}

const flowsOf = (c: CompiledDeal, levels: number[]) => makeDealRunner(c).detailed(flatBatch(c, levels)).flows;

const base = (over: Partial<DealInput>): DealInput => ({
  format: 'factor-triage/deal@1',
  name: 'under way',
  valuationDate: '2026-12-01',
  notional: 1,
  currency: 'DOM',
  underlyings: { ALDR: { kind: 'equity', currency: 'DOM', initialLevel: 100 } },
  schedules: {},
  events: [],
  ...over,
});

describe('past events are run once at compile time with the evaluator’s rules (argued from the payoff text)', () => {
  it('the demo autocallable a year in: three coupons paid, the fourth missed and remembered, not called', () => {
    // Payoff text: a coupon of 2.1 % is paid when ALDR ≥ 75 % of 5600 = 4200; otherwise `missed` grows by one and
    // the next paid coupon is 2.1 % × (1 + missed); a call at par needs ALDR ≥ 5600 on a call date (first
    // 2026-11-10). Fixings 5750, 5480, 4950 are ≥ 4200 (paid), 4080 < 4200 (missed, and < 5600: no call).
    const r = checkDeal(sample());
    expect(r.issues.filter((i) => i.severity === 'error')).toEqual([]);
    const c = r.compiled!;
    expect(c.state).toEqual([{ name: 'missed', initial: 1 }]);
    expect(c.history!.payments.map((p) => [p.date, p.amount, p.cash])).toEqual([
      ['2026-02-10', 0.021, 21000],
      ['2026-05-10', 0.021, 21000],
      ['2026-08-10', 0.021, 21000],
    ]);
    expect(c.history!.events.filter((e) => e.date === '2026-11-10')).toEqual([
      { event: 'coupon', date: '2026-11-10', fired: false },
      { event: 'missed coupon', date: '2026-11-10', fired: true },
      { event: 'autocall', date: '2026-11-10', fired: false },
    ]);
    // The next coupon (2027-02-10) pays 2 × 2.1 % when ALDR ≥ 4200, and none below it.
    const coupon = flowsOf(c, [4400, 4000]).find((f) => f.event === 'coupon')!;
    expect(coupon.time).toBeCloseTo(79 / 365, 12); // 2026-11-23 → 2027-02-10: 79 days
    expect(Array.from(coupon.values)).toEqual([1e6 * 0.021 * 2, 0]);
  });

  it('no negative time reaches the rest of the engine', () => {
    const c = compileDeal(sample());
    for (const e of [...c.events, ...c.exercise]) {
      for (const t of e.times) expect(t).toBeGreaterThanOrEqual(0);
      expect(e.startTime ?? 0).toBeGreaterThanOrEqual(0);
    }
    for (const t of c.gridTimes) expect(t).toBeGreaterThan(0);
    for (const r of c.running)
      if (r.times !== 'grid') for (const t of r.times) expect(t).toBeGreaterThanOrEqual(0);
  });

  it('running lowest, highest and average start from the past fixings; a date on the valuation date is today’s', () => {
    // obs: 2026-10-01, 2026-11-01 (past: 90 and 110), 2026-12-01 (the valuation date: the path), 2027-01..03-01.
    const d = base({
      schedules: {
        obs: { start: '2026-09-01', end: '2027-03-01', every: '1M' },
        final: { dates: ['2027-03-01'] },
      },
      events: [
        { label: 'low', on: 'final', pay: { amount: 'lowest(ALDR, obs)' } },
        { label: 'high', on: 'final', pay: { amount: 'highest(ALDR, obs)' } },
        { label: 'mean', on: 'final', pay: { amount: 'average(ALDR, obs)' } },
      ],
      history: { fixings: { ALDR: { '2026-10-01': 90, '2026-11-01': 110 } } },
    });
    const c = compileDeal(d);
    expect(c.running.map((r) => r.seed)).toEqual([
      { value: 90, count: 2 },
      { value: 110, count: 2 },
      { value: 100, count: 2 },
    ]);
    const f = flowsOf(c, [120, 80]);
    const v = (label: string) => Array.from(f.find((x) => x.event === label)!.values);
    expect(v('low')).toEqual([90, 80]);
    expect(v('high')).toEqual([120, 110]);
    // four observations from the path (12-01, 01-01, 02-01, 03-01) after two past ones
    expect(v('mean')[0]).toBeCloseTo((90 + 110 + 4 * 120) / 6, 12);
    expect(v('mean')[1]).toBeCloseTo((90 + 110 + 4 * 80) / 6, 12);
  });

  it('dt, index and count continue the whole schedule; a past period’s rate comes from the history', () => {
    // quarterly from 2026-08-15: 2026-11-15 (past), 2027-02-15, 2027-05-15, 2027-08-15.
    const d = base({
      rates: ['DOM'],
      schedules: { q: { start: '2026-08-15', end: '2027-08-15', every: '3M' } },
      events: [
        { label: 'dt', on: 'q', pay: { amount: 'dt' } },
        { label: 'index', on: 'q', pay: { amount: 'index * 100 + count' } },
        { label: 'float', on: 'q', pay: { amount: 'fixing(DOM) * dt' } },
      ],
      history: { rates: { DOM: { '2026-08-15': 0.02, '2026-11-15': 0.031 } } },
    });
    const c = compileDeal(d);
    expect(c.history!.payments).toEqual([
      { event: 'dt', date: '2026-11-15', currency: 'DOM', amount: 92 / 365, cash: 92 / 365 },
      { event: 'index', date: '2026-11-15', currency: 'DOM', amount: 104, cash: 104 },
      {
        event: 'float',
        date: '2026-11-15',
        currency: 'DOM',
        amount: 0.02 * (92 / 365),
        cash: 0.02 * (92 / 365),
      },
    ]);
    const f = flowsOf(c, [100, 100]);
    const first = (label: string) => f.find((x) => x.event === label)!;
    expect(first('dt').time).toBeCloseTo(76 / 365, 12); // 2026-12-01 → 2027-02-15
    expect(first('dt').values[0]).toBe(92 / 365); // 2026-11-15 → 2027-02-15: 92 days
    expect(first('index').values[0]).toBe(204);
    // the period 2026-11-15 → 2027-02-15 was fixed at 3.1 % on its first day, whatever the paths do now
    expect(first('float').values[0]).toBeCloseTo(0.031 * (92 / 365), 15);
    expect(f.filter((x) => x.event === 'index').map((x) => x.values[1])).toEqual([204, 304, 404]);
  });

  it('a seasoned deal equals the same deal written from today with its state carried over, bit for bit', () => {
    // The remaining life of the seasoned autocallable is a fresh deal valued on 2026-11-23 whose schedules restart
    // at the last past dates and whose `missed` counter starts at 1.
    const seasoned = compileDeal(sample());
    const fresh = sample();
    delete fresh.history;
    fresh.state = { missed: 1 };
    fresh.schedules = {
      quarterly: { start: '2026-11-10', end: '2028-11-10', every: '3M' },
      callDates: { start: '2026-11-10', end: '2028-08-10', every: '3M' },
      final: { dates: ['2028-11-10'] },
    };
    const f = compileDeal(fresh);
    expect(seasoned.gridTimes).toEqual(f.gridTimes);
    const batch = makeTestBatch({
      nPaths: 4096,
      times: f.gridTimes,
      seed: 'seasoned-autocall',
      domestic: 'DOM',
      rate: 0.03,
      equities: [{ name: 'ALDR', spot: 3400, vol: 0.25, divYield: 0.02 }],
    });
    const a = makeDealEvaluator(seasoned)(batch);
    const b = makeDealEvaluator(f)(batch);
    expect(Array.from(a)).toEqual(Array.from(b));
  });
});

describe('the past run at compile time agrees with the evaluator run over the whole life', () => {
  it('the issued autocallable on paths that share the past = past coupons + the seasoned note discounted', () => {
    // Second method in the project: the vectorised evaluator runs the issued note (the seasoned file without its
    // history, valued on its issue date 2025-11-10) over paths whose levels on the four past coupon dates are the
    // seasoned file's fixings on every path and which continue from 3400 on 2026-11-23. Under a flat rate r
    // (discount e^{−rt}, common practice) its value per path is the coupons paid before 2026-11-23 discounted, plus
    // e^{−rτ} times the seasoned note's value on the continuation.
    const issuedDeal = sample();
    delete issuedDeal.history;
    issuedDeal.valuationDate = '2025-11-10';
    const issued = compileDeal(issuedDeal);
    const seasonedDeal = sample();
    const seasoned = compileDeal(seasonedDeal);
    const tau = 378 / 365; // 2025-11-10 → 2026-11-23
    const r = 0.03;
    const cont = makeTestBatch({
      nPaths: 2048,
      times: seasoned.gridTimes,
      seed: 'shared-past',
      domestic: 'DOM',
      rate: r,
      equities: [{ name: 'ALDR', spot: 3400, vol: 0.25, divYield: 0.02 }],
    });
    const n = cont.nPaths;
    const past = issued.gridTimes.filter((t) => t < tau);
    const fix = seasonedDeal.history!.fixings!.ALDR!;
    const pastDates = Object.keys(fix).sort();
    const pastLevels = pastDates.map((d) => fix[d]!);
    expect(past.length).toBe(pastLevels.length);
    const times = Float64Array.from([0, ...past, ...Array.from(cont.times, (s) => tau + s)]);
    const K = times.length;
    const eq = new Float64Array(K * n);
    eq.fill(5600, 0, n);
    pastLevels.forEach((v, i) => eq.fill(v, (i + 1) * n, (i + 2) * n));
    eq.set(cont.equity.ALDR!, (past.length + 1) * n);
    const discount = new Float64Array(K * n);
    for (let k = 0; k < K; k++) discount.fill(Math.exp(-r * times[k]!), k * n, (k + 1) * n);
    const whole: PathBatch = {
      nPaths: n,
      times,
      equity: { ALDR: eq },
      variance: {},
      fx: {},
      shortRate: {},
      discount,
      bond: () => {
        throw new Error('no rates in this deal');
      },
    };
    const full = makeDealEvaluator(issued)(whole);
    const rest = makeDealEvaluator(seasoned)(cont);
    const pastCash = seasoned.history!.payments.reduce(
      (s, p) => s + p.cash * Math.exp(-r * past[pastDates.indexOf(p.date)]!),
      0,
    );
    for (let p = 0; p < n; p++) {
      const expected = pastCash + Math.exp(-r * tau) * rest[p]!;
      expect(Math.abs(full[p]! - expected), `path ${p}: ${full[p]} vs ${expected}`).toBeLessThan(1e-6);
    }
  });
});

/**
 * Prices an issued deal over paths that all share one past (levels `pastLevel(i)` on its i-th grid date before
 * `today`) and continue from `spot`, and the same deal valued on `today` with that past as its history; returns the
 * largest gap between the issued value per path and past cash plus the discounted seasoned value.
 */
function sharedPastGap(
  file: string,
  id: string,
  today: string,
  pastLevel: (i: number) => number,
  spot: number,
) {
  const issuedDeal = read(file);
  const issued = compileDeal(issuedDeal);
  const day0 = parseIsoDate(issuedDeal.valuationDate!).dayNumber;
  const tau = (parseIsoDate(today).dayNumber - day0) / 365;
  const past = issued.gridTimes.filter((t) => t < tau - 1e-9);
  const dateOf = (t: number) => formatIsoDate(day0 + Math.round(t * 365));
  const seasonedDeal: DealInput = {
    ...issuedDeal,
    valuationDate: today,
    history: { fixings: { [id]: Object.fromEntries(past.map((t, i) => [dateOf(t), pastLevel(i)])) } },
  };
  const seasoned = compileDeal(seasonedDeal);
  const r = 0.03;
  const cont = makeTestBatch({
    nPaths: 1024,
    times: seasoned.gridTimes,
    seed: `shared-past-${file}`,
    domestic: 'DOM',
    rate: r,
    equities: [{ name: id, spot, vol: 0.25, divYield: 0.02 }],
  });
  const n = cont.nPaths;
  const times = Float64Array.from([0, ...past, ...Array.from(cont.times, (x) => tau + x)]);
  const K = times.length;
  const eq = new Float64Array(K * n);
  eq.fill(issuedDeal.underlyings[id]!.initialLevel!, 0, n);
  past.forEach((_, i) => eq.fill(pastLevel(i), (i + 1) * n, (i + 2) * n));
  eq.set(cont.equity[id]!, (past.length + 1) * n);
  const discount = new Float64Array(K * n);
  for (let k = 0; k < K; k++) discount.fill(Math.exp(-r * times[k]!), k * n, (k + 1) * n);
  const whole: PathBatch = {
    nPaths: n,
    times,
    equity: { [id]: eq },
    variance: {},
    fx: {},
    shortRate: {},
    discount,
    bond: () => {
      throw new Error('no rates in this deal');
    },
  };
  const full = makeDealEvaluator(issued)(whole);
  const rest = makeDealEvaluator(seasoned)(cont);
  const pastCash = seasoned.history!.payments.reduce(
    (acc, x) => acc + x.cash * Math.exp((-r * (parseIsoDate(x.date).dayNumber - day0)) / 365),
    0,
  );
  let gap = 0;
  for (let p = 0; p < n; p++)
    gap = Math.max(gap, Math.abs(full[p]! - (pastCash + Math.exp(-r * tau) * rest[p]!)));
  return { gap, pastDates: past.length, seasoned };
}

describe('templates under way agree with the evaluator over their whole life on paths sharing the past', () => {
  it('the barrier reverse convertible knocked in before the valuation date (running minimum over business days)', () => {
    // BRIX dips to 650 (66 % of 980, below the 70 % knock-in) on the 40th business day, then recovers to 900
    const { gap, pastDates, seasoned } = sharedPastGap(
      'barrier-reverse-convertible.json',
      'BRIX',
      '2027-05-10',
      (i) => (i === 40 ? 650 : 900 + 10 * Math.sin(i)),
      950,
    );
    expect(pastDates).toBeGreaterThan(100);
    expect(seasoned.running[0]!.seed!.value).toBe(650);
    expect(gap).toBeLessThan(1e-6);
  });
  it('the cliquet a year and a half in (two state variables carried over six past resets)', () => {
    const { gap, seasoned } = sharedPastGap(
      'cliquet-capped-floored.json',
      'ALDR',
      '2028-06-01',
      (i) => 4200 * (1 + 0.06 * Math.sin(2 * i + 1)),
      4300,
    );
    expect(seasoned.events[0]!.pastDates).toBe(6);
    expect(gap).toBeLessThan(1e-9);
  });
});

describe('exercise rights and rate periods around the valuation date', () => {
  it('an exercise date before the valuation date is ignored and listed; later ones remain', () => {
    // calls: 2026-09-01 (past), 2026-12-01, 2027-03-01, 2027-06-01; valued 2026-11-15
    const c = compileDeal(
      base({
        valuationDate: '2026-11-15',
        schedules: {
          calls: { start: '2026-06-01', end: '2027-06-01', every: '3M' },
          final: { dates: ['2027-06-01'] },
        },
        events: [{ label: 'final', on: 'final', pay: { amount: 'perf(ALDR)' } }],
        exercise: [{ label: 'issuer call', on: 'calls', by: 'issuer', amount: '1' }],
      }),
    );
    expect(c.history!.ignoredExercise).toEqual([{ label: 'issuer call', date: '2026-09-01' }]);
    expect(c.exercise[0]!.times).toEqual([16 / 365, 106 / 365, 198 / 365]);
    expect(c.exercise[0]!.pastDates).toBe(1);
  });
  it('fixing(C, tau) whose period began before the valuation date reads the rate fixed that day', () => {
    // paid 2027-03-01 (90 days on): the period [t − 0.25, t] began 91.25 days earlier, nearest day 2026-11-30
    const d = base({
      rates: ['DOM'],
      schedules: { s: { dates: ['2027-03-01'] } },
      events: [{ label: 'float', on: 's', pay: { amount: 'fixing(DOM, 0.25)' } }],
      history: { rates: { DOM: { '2026-11-30': 0.04 } } },
    });
    const c = compileDeal(d);
    expect(Array.from(flowsOf(c, [100, 100])[0]!.values)).toEqual([0.04, 0.04]);
    expect(analyseDeal(c).rateDependent.present).toBe(false);
    delete d.history;
    expect(checkDeal(d).issues.map((i) => i.field)).toEqual(['deal.history.rates.DOM["2026-11-30"]']);
  });
  it('a swap rate read on a past date and dt on the first date of a past dates schedule are refused at the field', () => {
    const swap = base({
      rates: ['DOM'],
      schedules: { s: { start: '2026-06-01', end: '2027-06-01', every: '3M' } },
      events: [{ label: 'cms', on: 's', pay: { amount: 'swap_rate(DOM, 2, 1)' } }],
    });
    expect(checkDeal(swap).issues.map((i) => [i.code, i.field])).toEqual([
      ['E_PAST_RATE_NOT_RECORDED', 'deal.events[0].pay.amount'],
    ]);
    const accrual = base({
      schedules: { s: { dates: ['2026-09-01', '2027-03-01'] } },
      events: [{ label: 'acc', on: 's', pay: { amount: 'dt' } }],
    });
    expect(checkDeal(accrual).issues.map((i) => [i.code, i.field])).toEqual([
      ['E_PAST_NO_PERIOD_START', 'deal.events[0].pay.amount'],
    ]);
  });
});

describe('a call struck at a past fixing is a Black–Scholes call with that strike', () => {
  // Hull, OFOD (8th ed.), BSM chapter worked example: S=42, K=40, T=0.5, r=0.1, q=0, vol=0.2 → 4.76 (from memory);
  // re-computed 4.75942239287 (shared/reference/published.md). Here K = 40 was fixed on 2026-06-01 (past).
  const seasoned = base({
    underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
    schedules: { strikeDate: { dates: ['2026-06-01'] }, expiry: { dates: [0.5] } },
    state: { K: 0 },
    events: [
      { label: 'strike', on: 'strikeDate', set: { K: 'ALDR' } },
      { label: 'expiry', on: 'expiry', pay: { amount: 'max(ALDR - K, 0)' } },
    ],
    history: { fixings: { ALDR: { '2026-06-01': 40 } } },
  });
  const batch = makeTestBatch({
    nPaths: 40_000,
    times: [0.5],
    seed: 'seasoned-call',
    domestic: 'DOM',
    rate: 0.1,
    equities: [{ name: 'ALDR', spot: 42, vol: 0.2, divYield: 0 }],
  });
  it('prices within 3 SE of the published value and of bsPrice, with SE below 0.05', () => {
    const got = meanSe(makeDealEvaluator(compileDeal(seasoned))(batch));
    expect(got.se).toBeLessThan(0.05);
    for (const [name, expected] of [
      ['Hull example', 4.75942239287],
      ['bsPrice', bsPrice({ type: 'call', S: 42, K: 40, T: 0.5, r: 0.1, q: 0, vol: 0.2 })],
    ] as const)
      expect(
        Math.abs(got.mean - expected),
        `${name}: expected ${expected}, computed ${got.mean} ± ${got.se}`,
      ).toBeLessThanOrEqual(3 * got.se);
  });
  it('equals path by path the call written with the strike as a constant', () => {
    const plain = base({
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
      schedules: { expiry: { dates: [0.5] } },
      parameters: { K: 40 },
      events: [{ on: 'expiry', pay: { amount: 'max(ALDR - K, 0)' } }],
    });
    expect(Array.from(makeDealEvaluator(compileDeal(seasoned))(batch))).toEqual(
      Array.from(makeDealEvaluator(compileDeal(plain))(batch)),
    );
  });
});

describe('the rules see the remaining life only', () => {
  const note = (valuationDate: string) =>
    analyseDeal(
      compileDeal(
        base({
          valuationDate,
          rates: ['DOM'],
          schedules: {
            q: { start: '2026-08-15', end: '2027-02-15', every: '3M' },
            final: { dates: ['2027-08-15'] },
          },
          events: [
            { label: 'float', on: 'q', pay: { amount: 'fixing(DOM) * dt' } },
            { label: 'final', on: 'final', pay: { amount: 'perf(ALDR)' } },
          ],
          history: { rates: { DOM: { '2026-08-15': 0.02, '2026-11-15': 0.031 } } },
        }),
      ),
    );
  it('a note whose last floating coupon was fixed before the valuation date no longer reads a rate', () => {
    // on 2026-12-01 the last coupon (2027-02-15) was fixed on 2026-11-15: nothing random in rates is left
    const x = note('2026-12-01');
    expect(x.rateDependent.present).toBe(false);
    expect(x.rates).toEqual([]);
  });
  it('the same note before its first fixing date reads DOM rates', () => {
    const x = analyseDeal(
      compileDeal(
        base({
          valuationDate: '2026-08-15',
          rates: ['DOM'],
          schedules: { q: { start: '2026-08-15', end: '2027-02-15', every: '3M' } },
          events: [{ label: 'float', on: 'q', pay: { amount: 'fixing(DOM) * dt' } }],
        }),
      ),
    );
    expect(x.rateDependent.present).toBe(true);
  });
});

describe('bad history is refused with the field and the fix', () => {
  const errors = (d: unknown) => checkDeal(d).issues.filter((i) => i.severity === 'error');
  it('a missing past fixing names the underlying, the date and the event that needs it', () => {
    const d = sample();
    delete d.history!.fixings!.ALDR!['2026-08-10'];
    const e = errors(d);
    expect(e.map((i) => i.message)).toEqual([
      'deal.history.fixings.ALDR["2026-08-10"]: needed by event "coupon" on 2026-08-10 (a past date); give the level observed that day',
    ]);
    expect(e[0]!.code).toBe('E_MISSING_FIXING');
    const needs = checkDeal(d).historyNeeds!;
    expect(needs.filter((n) => !n.given).map((n) => n.field)).toEqual([
      'deal.history.fixings.ALDR["2026-08-10"]',
    ]);
    expect(needs.map((n) => n.date)).toEqual(['2026-02-10', '2026-05-10', '2026-08-10', '2026-11-10']);
  });
  it('a missing past rate names the currency and the fixing date', () => {
    const d = base({
      rates: ['DOM'],
      schedules: { q: { start: '2026-08-15', end: '2027-08-15', every: '3M' } },
      events: [{ label: 'float', on: 'q', pay: { amount: 'fixing(DOM) * dt' } }],
      history: { rates: { DOM: { '2026-08-15': 0.02 } } },
    });
    expect(errors(d).map((i) => i.field)).toEqual(['deal.history.rates.DOM["2026-11-15"]']);
  });
  it('a fixing on or after the valuation date, or for an unknown underlying, is refused', () => {
    const d = sample();
    d.history!.fixings!.ALDR!['2026-11-23'] = 4150;
    (d.history!.fixings as Record<string, Record<string, number>>)['BRIX'] = { '2026-02-10': 900 };
    const e = errors(d);
    expect(e.map((i) => [i.code, i.field])).toEqual([
      ['E_HISTORY_NOT_PAST', 'deal.history.fixings.ALDR["2026-11-23"]'],
      ['E_HISTORY_UNKNOWN_UNDERLYING', 'deal.history.fixings.BRIX'],
    ]);
    expect(e[0]!.message).toContain('remove it');
  });
  it('a deal the past autocalled does not compile: the message names the event, the date and that it ended', () => {
    const d = sample();
    d.history!.fixings!.ALDR!['2026-11-10'] = 5700;
    const e = errors(d);
    expect(e.map((i) => [i.code, i.field])).toEqual([['E_DEAL_ENDED', 'deal.events[2]']]);
    expect(e[0]!.message).toContain('"autocall"');
    expect(e[0]!.message).toContain('2026-11-10');
    expect(e[0]!.message).toContain('the deal has ended');
  });
  it('a deal whose every date is past has ended', () => {
    const d = base({
      schedules: { s: { dates: ['2026-06-01'] } },
      events: [{ label: 'pay', on: 's', pay: { amount: 'perf(ALDR)' } }],
      history: { fixings: { ALDR: { '2026-06-01': 105 } } },
    });
    expect(errors(d).map((i) => [i.code, i.field])).toEqual([['E_DEAL_ENDED', 'deal.valuationDate']]);
  });
  it('a deal under way that reads perf() needs its initial level', () => {
    const d = sample();
    delete d.underlyings.ALDR!.initialLevel;
    expect(errors(d).map((i) => i.field)).toEqual(['deal.underlyings.ALDR.initialLevel']);
  });
});
