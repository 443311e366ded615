import { describe, it, expect } from 'vitest';
import { checkDeal, compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { evaluateDetailed, makeDealEvaluator } from '../../../src/engine/deal/dealEvaluator.ts';
import type { DealInput } from '../../../src/engine/deal/types.ts';
import type { PathBatch } from '../../../src/engine/simulation/types.ts';

/** A two-path batch with chosen levels (time-major), flat 5 % rate; FX ASH/DOM = DOM per ASH. */
function handBatch(levels: number[][], fx?: number[][]): PathBatch {
  const times = Float64Array.from([0, 1, 2, 3]);
  const n = levels.length;
  const K = times.length;
  const eq = new Float64Array(K * n);
  levels.forEach((path, p) => path.forEach((v, k) => (eq[k * n + p] = v)));
  const fxArr = new Float64Array(K * n);
  (fx ?? levels.map(() => [1.5, 1.5, 1.5, 1.5])).forEach((path, p) =>
    path.forEach((v, k) => (fxArr[k * n + p] = v)),
  );
  const discount = new Float64Array(K * n);
  for (let k = 0; k < K; k++) discount.fill(Math.exp(-0.05 * times[k]!), k * n, (k + 1) * n);
  return {
    nPaths: n,
    times,
    equity: { ALDR: eq },
    variance: {},
    fx: { 'ASH/DOM': fxArr },
    shortRate: { DOM: new Float64Array(K * n).fill(0.05), ASH: new Float64Array(K * n).fill(0.02) },
    discount,
    bond: (ccy, k, T, out) => out.fill(Math.exp(-(ccy === 'DOM' ? 0.05 : 0.02) * (T - times[k]!))),
  };
}

const memoryDeal: DealInput = {
  format: 'factor-triage/deal@1',
  name: 'memory',
  notional: 100,
  currency: 'DOM',
  underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
  parameters: { c: 0.1 },
  schedules: { obs: { dates: [1, 2, 3] }, calls: { dates: [1, 2] }, final: { dates: [3] } },
  state: { missed: 0 },
  events: [
    {
      label: 'coupon',
      on: 'obs',
      when: 'perf(ALDR) >= 0.8',
      pay: { amount: 'c * (1 + missed)' },
      set: { missed: '0' },
    },
    { label: 'miss', on: 'obs', when: 'perf(ALDR) < 0.8', set: { missed: 'missed + 1' } },
    { label: 'call', on: 'calls', when: 'perf(ALDR) >= 1', pay: { amount: '1' }, terminate: true },
    { label: 'redeem', on: 'final', pay: { amount: 'min(perf(ALDR), 1)' } },
  ],
};

describe('events, state and early termination follow the documented order', () => {
  const d = (t: number) => Math.exp(-0.05 * t);
  // path 0: 100 → 70 (miss) → 105 (coupon with one missed, called) ; path 1: 100 → 90 → 75 → 60 (coupon, miss, miss)
  const batch = handBatch([
    [100, 70, 105, 200],
    [100, 90, 75, 60],
  ]);

  it('memory coupons, calls and redemption pay the hand-computed cash flows (common practice)', () => {
    const v = makeDealEvaluator(compileDeal(memoryDeal))(batch);
    const p0 = 100 * (0.2 * d(2) + 1 * d(2));
    const p1 = 100 * (0.1 * d(1) + 0.6 * d(3));
    expect(v[0]).toBeCloseTo(p0, 12);
    expect(v[1]).toBeCloseTo(p1, 12);
  });

  it('evaluateDetailed splits the same value into flows by event date that add up to the total', () => {
    const det = evaluateDetailed(compileDeal(memoryDeal), batch);
    for (let p = 0; p < 2; p++) {
      const s = det.flows.reduce((acc, f) => acc + f.values[p]!, 0);
      expect(s).toBeCloseTo(det.total[p]!, 12);
    }
    const times = det.flows.map((f) => f.time);
    expect([...times].sort((a, b) => a - b)).toEqual(times);
    expect(det.flows.find((f) => f.event === 'call' && f.time === 2)!.values[0]).toBeCloseTo(100 * d(2), 12);
  });

  it('a funding spread s multiplies each flow paid at t by e^{−s t} (common practice)', () => {
    const base = makeDealEvaluator(compileDeal({ ...memoryDeal, events: [memoryDeal.events[3]!] }))(batch);
    const spread = makeDealEvaluator(
      compileDeal({ ...memoryDeal, events: [memoryDeal.events[3]!], fundingSpread: 0.01 }),
    )(batch);
    expect(spread[1]).toBeCloseTo(base[1]! * Math.exp(-0.03), 12);
  });

  it('a compo payment converts at the path FX rate and a quanto payment at the fixed rate', () => {
    const fxBatch = handBatch(
      [
        [100, 100, 100, 100],
        [100, 100, 100, 100],
      ],
      [
        [1.5, 1.6, 1.7, 1.8],
        [1.5, 1.2, 1.1, 1.0],
      ],
    );
    const pay = (conversion: { kind: 'compo' } | { kind: 'quanto'; rate: number }): DealInput => ({
      ...memoryDeal,
      state: {},
      events: [{ on: 'final', pay: { amount: '2', currency: 'ASH', conversion } }],
    });
    const compo = makeDealEvaluator(compileDeal(pay({ kind: 'compo' })))(fxBatch);
    const quanto = makeDealEvaluator(compileDeal(pay({ kind: 'quanto', rate: 1.5 })))(fxBatch);
    expect(compo[0]).toBeCloseTo(100 * 2 * 1.8 * d(3), 12);
    expect(compo[1]).toBeCloseTo(100 * 2 * 1.0 * d(3), 12);
    expect(quanto[0]).toBeCloseTo(100 * 2 * 1.5 * d(3), 12);
    expect(quanto[1]).toBeCloseTo(100 * 2 * 1.5 * d(3), 12);
  });

  it('exercise dates expose discounted exercise values, the alive flag and the regression features', () => {
    const callable: DealInput = {
      ...memoryDeal,
      exercise: [{ label: 'issuer call', on: 'calls', by: 'issuer', amount: '1' }],
    };
    const det = evaluateDetailed(compileDeal(callable), batch);
    expect(det.exercise.map((x) => x.time)).toEqual([1, 2]);
    const second = det.exercise[1]!;
    // path 0 was autocalled at t = 2 (events run before exercise on the same date): nothing left to call
    expect(second.alive[0]).toBe(0);
    expect(second.value[0]).toBe(0);
    expect(second.alive[1]).toBe(1);
    expect(second.value[1]).toBeCloseTo(100 * d(2), 12);
    expect(second.features['eq:ALDR']![1]).toBe(75);
    expect(second.features['state:missed']![1]).toBe(1);
    expect(second.features['rate:DOM']![1]).toBe(0.05);
    expect(second.by).toBe('issuer');
  });

  it('under stochastic volatility the regression features include the variance', () => {
    const b = handBatch([
      [100, 90, 75, 60],
      [100, 90, 75, 60],
    ]);
    const withVar: PathBatch = { ...b, bond: b.bond, variance: { ALDR: new Float64Array(8).fill(0.04) } };
    const det = evaluateDetailed(
      compileDeal({ ...memoryDeal, exercise: [{ on: 'calls', by: 'holder', amount: '1' }] }),
      withVar,
    );
    expect(det.exercise[0]!.features['var:ALDR']![0]).toBe(0.04);
    expect(det.exercise[0]!.by).toBe('holder');
  });
});

describe('deal files: every problem names its field', () => {
  const codes = (raw: unknown) => checkDeal(raw).issues.map((i) => `${i.code} ${i.field}`);

  it('shape errors name the JSON path', () => {
    const c = codes({ ...memoryDeal, notional: -1, extra: 1 });
    expect(c).toContain('E_DEAL_SHAPE deal.notional');
    expect(c.some((x) => x.startsWith('E_DEAL_SHAPE deal'))).toBe(true);
  });
  it('an unknown schedule, an unknown state variable and a missing conversion are reported', () => {
    const c = codes({
      ...memoryDeal,
      events: [
        { on: 'nowhere', pay: { amount: '1' } },
        { on: 'obs', set: { ghost: '1' } },
        { on: 'final', pay: { amount: '1', currency: 'ASH' } },
      ],
    });
    expect(c).toContain('E_UNKNOWN_SCHEDULE deal.events[0].on');
    expect(c).toContain('E_UNKNOWN_STATE deal.events[1].set.ghost');
    expect(c).toContain('E_MISSING_CONVERSION deal.events[2].pay.conversion');
  });
  it('names must be unique and must not be reserved words', () => {
    const c = codes({ ...memoryDeal, parameters: { c: 1, ALDR: 2, constructor: 3, max: 4 } });
    expect(c).toContain('E_DUPLICATE_NAME deal.parameters.ALDR');
    expect(c).toContain('E_RESERVED_NAME deal.parameters.constructor');
    expect(c).toContain('E_RESERVED_NAME deal.parameters.max');
  });
  it('expression errors keep the expression field path and the position', () => {
    const r = checkDeal({ ...memoryDeal, events: [{ on: 'final', pay: { amount: 'ALDR.constructor' } }] });
    expect(r.expressionErrors[0]!.field).toBe('deal.events[0].pay.amount');
    expect(r.expressionErrors[0]!.start).toBe(4);
    expect(r.issues[0]!.field).toBe('deal.events[0].pay.amount');
  });
  it('ISO dates need a valuation date and must be real dates', () => {
    const c = codes({
      ...memoryDeal,
      schedules: { ...memoryDeal.schedules, obs: { dates: ['2027-02-30'] } },
    });
    expect(c).toContain('E_DATE_DAY deal.schedules.obs.dates[0]');
    const c2 = codes({
      ...memoryDeal,
      schedules: { ...memoryDeal.schedules, obs: { dates: ['2027-02-01'] } },
    });
    expect(c2).toContain('E_NO_VALUATION_DATE deal.schedules.obs.dates[0]');
  });
  it('the compiled deal is plain data: it survives structuredClone and JSON unchanged', () => {
    const c = compileDeal(memoryDeal);
    expect(structuredClone(c)).toEqual(c);
    expect(JSON.parse(JSON.stringify(c))).toEqual(c);
  });
  it('schedules roll by months from the start date keeping the day of month, ACT/365F (ISDA 2006 §4.16(d))', () => {
    const c = compileDeal({
      ...memoryDeal,
      valuationDate: '2026-01-31',
      schedules: { ...memoryDeal.schedules, obs: { start: '2026-01-31', end: '2026-06-30', every: '1M' } },
    });
    // 2026-02-28 (28 days), 03-31 (59), 04-30 (89), 05-31 (120), 06-30 (150): end-of-month clipping, common practice
    expect(c.schedules.obs!.map((t) => Math.round(t * 365))).toEqual([28, 59, 89, 120, 150]);
  });
});

describe('type-as-you-check context', () => {
  it('expressionContextOf gives the same verdict on one expression as checking the whole deal', async () => {
    const { expressionContextOf } = await import('../../../src/engine/deal/compileDeal.ts');
    const { checkExpression } = await import('../../../src/engine/deal/checkExpression.ts');
    const field = 'deal.events[0].pay.amount';
    const ok = checkExpression(
      'c * (1 + missed) + lowest(ALDR, obs)',
      expressionContextOf(memoryDeal, field),
    );
    expect(ok.errors).toEqual([]);
    const bad = checkExpression('c * strike', expressionContextOf(memoryDeal, field));
    expect(bad.errors[0]!.code).toBe('E_EXPR_UNKNOWN_NAME');
    expect(bad.errors[0]!.start).toBe(4);
    // a partial deal (still being typed) is fine
    expect(checkExpression('1 + x', expressionContextOf({ parameters: { x: 1 } }, 'f')).errors).toEqual([]);
  });
});

describe('non-finite amounts', () => {
  const batch = handBatch([
    [100, 0, 100, 100],
    [100, 50, 100, 100],
  ]);
  const one = (amount: string, when?: string): DealInput => ({
    ...memoryDeal,
    state: {},
    events: [{ on: 'calls', ...(when ? { when } : {}), pay: { amount } }],
  });
  it('an amount that is infinite where the event pays is an error naming the field', () => {
    expect(() => makeDealEvaluator(compileDeal(one('1 / ALDR')))(batch)).toThrow(
      /deal\.events\[0\]\.pay\.amount must give a finite amount .*t = 1\.0000.*path 0/,
    );
  });
  it('an amount that is infinite only where the event does not fire is ignored', () => {
    const v = makeDealEvaluator(compileDeal(one('1 / ALDR', 'ALDR > 0')))(batch);
    expect(Number.isFinite(v[0]!) && Number.isFinite(v[1]!)).toBe(true);
    expect(v[0]).toBeCloseTo(100 * 0.01 * Math.exp(-0.1), 12);
  });
});

describe('weekday schedules', () => {
  it('a 1B schedule skips Saturdays and Sundays (2026-11-23 is a Monday; common practice)', () => {
    const c = compileDeal({
      ...memoryDeal,
      valuationDate: '2026-11-23',
      schedules: { ...memoryDeal.schedules, obs: { start: '2026-11-23', end: '2026-12-07', every: '1B' } },
    });
    // Tue 24 … Fri 27, Mon 30, Tue 1 … Fri 4, Mon 7 December
    expect(c.schedules.obs!.map((t) => Math.round(t * 365))).toEqual([1, 2, 3, 4, 7, 8, 9, 10, 11, 14]);
  });
});

describe('accrual of a forward-starting schedule', () => {
  it('dt of the first date runs from the schedule start, not from the valuation date (common practice)', () => {
    const c = compileDeal({
      ...memoryDeal,
      state: {},
      schedules: { fwd: { start: 1, end: 3, every: '1Y' } },
      events: [{ on: 'fwd', pay: { amount: 'dt' } }],
    });
    expect(c.events[0]!.startTime).toBe(1);
    expect(c.gridTimes).toEqual([1, 2, 3]);
    const det = evaluateDetailed(c, handBatch([[100, 100, 100, 100]]));
    expect(det.flows.map((f) => f.values[0]! / (100 * Math.exp(-0.05 * f.time)))).toEqual([1, 1]);
  });
});

describe('initial fixings', () => {
  it('with initialLevel, start() is the fixing and perf() moves with the path level (common practice for struck deals)', () => {
    const d: DealInput = {
      ...memoryDeal,
      state: {},
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM', initialLevel: 50 } },
      events: [{ on: 'final', pay: { amount: 'perf(ALDR) + start(ALDR)' } }],
    };
    const v = makeDealEvaluator(compileDeal(d))(handBatch([[100, 100, 100, 200]]));
    expect(v[0]).toBeCloseTo(100 * (200 / 50 + 50) * Math.exp(-0.15), 10);
  });
});

describe('simultaneous state updates', () => {
  it('swapping two state variables in one event reads both old values (common practice)', () => {
    const d: DealInput = {
      ...memoryDeal,
      state: { a: 1, b: 2 },
      events: [
        { on: 'calls', set: { a: 'b', b: 'a' } },
        { on: 'final', pay: { amount: '10 * a + b' } },
      ],
    };
    // two swaps (t = 1, 2): back to a = 1, b = 2
    const v = makeDealEvaluator(compileDeal(d))(handBatch([[100, 100, 100, 100]]));
    expect(v[0]).toBeCloseTo(100 * 12 * Math.exp(-0.15), 10);
    const once: DealInput = { ...d, schedules: { ...d.schedules, calls: { dates: [1] } } };
    expect(makeDealEvaluator(compileDeal(once))(handBatch([[100, 100, 100, 100]]))[0]).toBeCloseTo(
      100 * 21 * Math.exp(-0.15),
      10,
    );
  });
});

describe('hostile deal files', () => {
  it('a __proto__ or constructor key in a name table is rejected with its field', () => {
    const raw = JSON.parse(
      '{"format":"factor-triage/deal@1","name":"x","notional":1,"currency":"DOM","underlyings":{"__proto__":{"kind":"equity","currency":"DOM"}},"parameters":{"constructor":1},"schedules":{"s":{"dates":[1]}},"events":[{"on":"s","pay":{"amount":"1"}}]}',
    ) as unknown;
    const r = checkDeal(raw);
    expect(r.compiled).toBeUndefined();
    const fields = r.issues.map((i) => i.field);
    expect(fields).toContain('deal.underlyings.__proto__');
    expect(fields).toContain('deal.parameters.constructor');
    expect(({} as Record<string, unknown>).kind).toBeUndefined();
  });
  it('a schedule with more than 20 000 dates is refused before anything is simulated', () => {
    const r = checkDeal({
      ...memoryDeal,
      schedules: { ...memoryDeal.schedules, obs: { start: 0, end: 100, every: '1D' } },
    });
    expect(r.issues.map((i) => i.code)).toContain('E_SCHEDULE_TOO_LONG');
  });
});
