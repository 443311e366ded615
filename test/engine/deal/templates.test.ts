import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { checkDeal } from '../../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import { dealPayoffFactoryUrl, eventTimes } from '../../../src/engine/deal/dealPayoffFactory.ts';
import type { CompiledDeal, DealAnalysis } from '../../../src/engine/deal/types.ts';
import { inProcessExecutor, runSimulation, resultStats } from '../../../src/engine/simulation/index.ts';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';

const dir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../samples/deals');
const files = readdirSync(dir)
  .filter((f) => f.endsWith('.json') && !f.startsWith('callable-'))
  .sort();
const load = (f: string) => JSON.parse(readFileSync(path.join(dir, f), 'utf8')) as unknown;

/** A richest-style variant for pricing smoke runs: Heston equities, Hull–White DOM and ASH rates, lognormal FX. */
const variant: VariantSpec = {
  id: 'hybrid',
  label: 'Heston + Hull–White (DOM, ASH) + lognormal FX',
  domestic: 'DOM',
  equities: ['ALDR', 'BRIX', 'KESO'].map((name) => ({
    name,
    currency: name === 'KESO' ? 'ASH' : 'DOM',
    spot: name === 'ALDR' ? 4200 : name === 'BRIX' ? 980 : 2350,
    divYield: 0.02,
    dynamics: { kind: 'heston' as const, v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.4, rho: -0.6 },
  })),
  rates: {
    DOM: {
      curve: { currency: 'DOM', times: [1, 30], zeroRates: [0.03, 0.035] },
      hw: { a: 0.05, sigma: 0.008 },
    },
    ASH: {
      curve: { currency: 'ASH', times: [1, 30], zeroRates: [0.02, 0.025] },
      hw: { a: 0.05, sigma: 0.007 },
    },
  },
  fx: [{ name: 'ASH/DOM', foreign: 'ASH', spot: 1.37, vol: 0.09 }],
  correlation: {
    names: ['eq:ALDR', 'eq:BRIX', 'eq:KESO'],
    matrix: [
      [1, 0.6, 0.4],
      [0.6, 1, 0.4],
      [0.4, 0.4, 1],
    ],
  },
};

describe.each(files)('template %s', (f) => {
  const r = checkDeal(load(f));
  it('parses and checks without issues', () => {
    expect(r.issues.map((i) => i.message)).toEqual([]);
    expect(r.compiled).toBeDefined();
  });
  it('prices through the simulation runner to a finite value below three notionals, with a finite SE', async () => {
    const c = r.compiled as CompiledDeal;
    const description = { deals: [c] };
    const res = await runSimulation(
      {
        variants: [variant],
        payoff: { factory: dealPayoffFactoryUrl(), description },
        grid: { eventTimes: eventTimes(description), maxStep: 0.25 },
        seed: `template-${f}`,
        maxPaths: 1024,
        batchSize: 1024,
      },
      inProcessExecutor(),
    );
    const s = resultStats(res);
    const m = s.mean(0);
    expect(Number.isFinite(m) && Number.isFinite(s.se(0)), `${f}: ${m} ± ${s.se(0)}`).toBe(true);
    expect(Math.abs(m)).toBeLessThan(3 * c.notional * 1.37);
  });
});

describe('the deal analysis states what each template depends on (facts of the trade: common practice)', () => {
  const a = (f: string): DealAnalysis => analyseDeal(checkDeal(load(f)).compiled!);

  it('the European call reads one equity at one date and nothing else', () => {
    const x = a('european-call.json');
    expect(x.equities.map((e) => e.id)).toEqual(['ALDR']);
    expect(x.rateDependent.present || x.pathDependent.present || x.earlyTermination.present).toBe(false);
    expect(x.crossCurrency.present || x.quanto.present || x.compo.present || x.exercise.present).toBe(false);
    expect(x.reasons).toEqual([]);
  });
  it('the autocallable is path dependent and terminates early', () => {
    const x = a('autocallable-memory.json');
    expect(x.pathDependent.present).toBe(true);
    expect(x.earlyTermination.present).toBe(true);
    expect(x.rateDependent.present).toBe(false);
    expect(x.lastTime).toBeCloseTo(1096 / 365, 12);
  });
  it('the long-dated note pays a linear floating coupon at its natural date', () => {
    const x = a('long-dated-floating-note.json');
    expect(x.rates).toHaveLength(1);
    expect(x.rates[0]!.linearAtNaturalDate).toBe(true);
    expect(x.rates[0]!.nonLinear.present || x.rates[0]!.timingMismatch.present).toBe(false);
    expect(x.lastTime).toBeGreaterThan(12);
    expect(x.fundingSpread).toBe(0.011);
  });
  it('the best-of is non-linear in the DOM swap rate', () => {
    const x = a('equity-rate-best-of.json');
    expect(x.rates[0]!.nonLinear.present).toBe(true);
  });
  it('the range accrual holds a condition on a DOM rate (non-linear) and counts days in state', () => {
    const x = a('range-accrual.json');
    expect(x.rates[0]!.nonLinear.present).toBe(true);
    expect(x.pathDependent.present).toBe(true);
    expect(x.gridTimes.length).toBeGreaterThan(500);
  });
  it('the worst-of is a quanto: cross-currency, fixed conversion, no FX on the path', () => {
    const x = a('worst-of-quanto.json');
    expect(x.quanto.present && x.crossCurrency.present).toBe(true);
    expect(x.compo.present || x.fxDependent.present).toBe(false);
    expect(x.currencies.sort()).toEqual(['ASH', 'DOM']);
    expect(x.equities.map((e) => e.id).sort()).toEqual(['ALDR', 'KESO']);
  });
  it('the cliquet and the reverse convertible are path dependent without rates', () => {
    for (const f of ['cliquet-capped-floored.json', 'barrier-reverse-convertible.json']) {
      const x = a(f);
      expect(x.pathDependent.present, f).toBe(true);
      expect(x.rateDependent.present, f).toBe(false);
    }
  });
});

describe('the analysis tells rate uses apart', () => {
  const one = (amount: string, extra: Record<string, unknown> = {}) =>
    analyseDeal(
      checkDeal({
        format: 'factor-triage/deal@1',
        name: 'x',
        notional: 1,
        currency: 'DOM',
        underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
        rates: ['DOM'],
        schedules: { s: { dates: [1, 2] } },
        events: [{ on: 's', pay: { amount } }],
        ...extra,
      }).compiled!,
    ).rates[0]!;
  it('a fixing, a bond or a short rate paid linearly is replicated by the curve (Brigo & Mercurio 2006, Sec. 1.5)', () => {
    expect(one('fixing(DOM) * dt + 0.01').linearAtNaturalDate).toBe(true);
    expect(one('2 * bond(DOM, 3) - short_rate(DOM)').linearAtNaturalDate).toBe(true);
  });
  it('a term rate paid at its fixing date is a timing mismatch (in-arrears convexity)', () => {
    expect(one('term_rate(DOM, 0.5)').timingMismatch.present).toBe(true);
  });
  it('a floored rate, a rate times an equity and a condition on a rate are non-linear', () => {
    expect(one('max(fixing(DOM), 0)').nonLinear.present).toBe(true);
    expect(one('fixing(DOM) * perf(ALDR)').nonLinear.present).toBe(true);
    expect(one('short_rate(DOM) > 0.03 ? 1 : 0').nonLinear.present).toBe(true);
  });
});

describe('the analysis marks compo payments and FX read on the path', () => {
  it('a payment in ASH converted at the path FX rate is compo, FX dependent and cross-currency', () => {
    const x = analyseDeal(
      checkDeal({
        format: 'factor-triage/deal@1',
        name: 'compo',
        notional: 1,
        currency: 'DOM',
        underlyings: { KESO: { kind: 'equity', currency: 'ASH' } },
        schedules: { s: { dates: [1] } },
        events: [
          {
            on: 's',
            pay: { amount: 'max(perf(KESO) - 1, 0)', currency: 'ASH', conversion: { kind: 'compo' } },
          },
        ],
      }).compiled!,
    );
    expect(x.compo.present && x.fxDependent.present && x.crossCurrency.present).toBe(true);
    expect(x.quanto.present).toBe(false);
    expect(x.fx).toEqual([{ id: 'ASH/DOM', units: 'DOM', per: 'ASH' }]);
  });
});

describe('compiled programs are well formed', () => {
  it('in every template, each node refers only to earlier nodes and the root is the last node', () => {
    for (const f of files) {
      const c = checkDeal(load(f)).compiled!;
      const programs = [
        ...c.events.flatMap((e) => [
          ...(e.when ? [e.when] : []),
          ...e.pay.map((p) => p.amount),
          ...e.set.map((s) => s.value),
        ]),
        ...c.exercise.map((x) => x.amount.amount),
      ];
      for (const p of programs) {
        // The nodes a node reads (its operands), by kind.
        const operands = (n: (typeof p.nodes)[number]): number[] =>
          n.op === 'unary'
            ? [n.a]
            : n.op === 'binary'
              ? [n.a, n.b]
              : n.op === 'select'
                ? [n.c, n.a, n.b]
                : n.op === 'nary'
                  ? n.args
                  : [];
        p.nodes.forEach((n, i) => {
          for (const r of operands(n)) expect(r, `${f} ${p.field} node ${i}`).toBeLessThan(i);
        });
        const used = new Set(p.nodes.flatMap(operands));
        expect(used.has(p.nodes.length - 1), `${f} ${p.field}: the last node must be the root`).toBe(false);
      }
    }
  });
});
