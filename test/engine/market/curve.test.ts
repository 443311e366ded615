import { describe, it, expect } from 'vitest';
import { curveIssues, flatCurve, makeCurve, shiftedCurve } from '../../../src/engine/market/curve.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import type { CurveSpec } from '../../../src/engine/market/types.ts';

// Pillars of an invented DOM curve (shape only: no test checks a value taken from it, only identities).
const spec: CurveSpec = {
  currency: 'DOM',
  times: [0.25, 0.5, 1, 2, 3, 5, 7, 10, 15, 20, 30],
  zeroRates: [0.0253, 0.0256, 0.0262, 0.0272, 0.0281, 0.0296, 0.0308, 0.0321, 0.0335, 0.0342, 0.0348],
};

function thrownIssue(f: () => unknown): { code: string; field: string; message: string } {
  try {
    f();
  } catch (e) {
    if (e instanceof EngineError)
      return { code: e.issues[0]!.code, field: e.issues[0]!.field, message: e.message };
    throw e;
  }
  throw new Error('expected an EngineError');
}

describe('makeCurve', () => {
  it('reproduces discount factors and zero rates at the pillars exactly (to 1e-15)', () => {
    const c = makeCurve(spec, 'curves.DOM');
    spec.times.forEach((t, i) => {
      const z = spec.zeroRates![i]!;
      expect(Math.abs(c.zero(t) - z)).toBeLessThan(1e-15);
      expect(Math.abs(c.df(t) / Math.exp(-z * t) - 1)).toBeLessThan(1e-14);
    });
    const dfs = spec.times.map((t, i) => Math.exp(-spec.zeroRates![i]! * t));
    const c2 = makeCurve({ currency: 'DOM', times: spec.times, discountFactors: dfs });
    spec.times.forEach((t, i) => expect(Math.abs(c2.df(t) / dfs[i]! - 1)).toBeLessThan(1e-14));
  });

  it('has a continuous instantaneous forward across every pillar (jump < 1e-7 at ±1e-8 y)', () => {
    const c = makeCurve(spec);
    for (const t of spec.times) {
      const jump = Math.abs(c.instFwd(t + 1e-8) - c.instFwd(t - 1e-8));
      if (!(jump < 1e-7)) throw new Error(`forward jumps by ${jump} at t=${t}`);
    }
  });

  it('has f(0,t) = d/dt(−ln P(0,t)) (central difference, 1e-8) and fwd consistent with discount factors', () => {
    const c = makeCurve(spec);
    for (let t = 0.05; t < 40; t += 0.37) {
      const h = 1e-5;
      const fd = (Math.log(c.df(t - h)) - Math.log(c.df(t + h))) / (2 * h);
      expect(Math.abs(fd - c.instFwd(t))).toBeLessThan(1e-8);
      const t2 = t + 0.5;
      expect(Math.abs(c.fwd(t, t2) - (c.df(t) / c.df(t2) - 1) / 0.5)).toBeLessThan(1e-13);
    }
    expect(c.fwd(3, 3)).toBe(c.instFwd(3));
  });

  it('is flat in zero rate before the first pillar and flat in forward after the last', () => {
    const c = makeCurve(spec);
    for (const t of [0, 0.01, 0.1, 0.2]) {
      expect(Math.abs(c.zero(t) - 0.0253)).toBeLessThan(1e-15);
      expect(Math.abs(c.instFwd(t) - 0.0253)).toBeLessThan(1e-15);
    }
    const fEnd = c.instFwd(30);
    for (const t of [31, 40, 60]) expect(Math.abs(c.instFwd(t) - fEnd)).toBeLessThan(1e-15);
    expect(c.df(0)).toBe(1);
  });

  it('reduces to a flat curve when all pillars have one rate (limit)', () => {
    const c = makeCurve({ currency: 'DOM', times: [1, 2, 5, 10], zeroRates: [0.03, 0.03, 0.03, 0.03] });
    for (let t = 0; t < 15; t += 0.7) {
      expect(Math.abs(c.instFwd(t) - 0.03)).toBeLessThan(1e-15);
      expect(Math.abs(c.df(t) - Math.exp(-0.03 * t))).toBeLessThan(1e-15);
    }
    const one = makeCurve({ currency: 'DOM', times: [2], discountFactors: [Math.exp(-0.04)] });
    expect(Math.abs(one.instFwd(7) - 0.02)).toBeLessThan(1e-15);
  });

  it('rejects bad pillars with errors naming the cell, the rule and the value', () => {
    const order = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [1, 2, 2, 3], zeroRates: [0.01, 0.01, 0.01, 0.01] }, 'curves.DOM'),
    );
    expect(order.field).toBe('curves.DOM.times[2]');
    expect(order.code).toBe('E_CURVE_ORDER');
    expect(order.message).toMatch(/strictly increasing.*got 2/);
    const neg = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [-1, 2], zeroRates: [0.01, 0.01] }, 'curves.DOM'),
    );
    expect(neg.field).toBe('curves.DOM.times[0]');
    const nan = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [1, 2], zeroRates: [0.01, NaN] }, 'curves.DOM'),
    );
    expect(nan.field).toBe('curves.DOM.zeroRates[1]');
    const df = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [1, 2], discountFactors: [0.99, 0] }, 'curves.DOM'),
    );
    expect(df.field).toBe('curves.DOM.discountFactors[1]');
    const both = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [1], zeroRates: [0.01], discountFactors: [0.99] }, 'curves.DOM'),
    );
    expect(both.message).toContain('exactly one of zeroRates or discountFactors');
    const len = thrownIssue(() =>
      makeCurve({ currency: 'DOM', times: [1, 2], zeroRates: [0.01] }, 'curves.DOM'),
    );
    expect(len.field).toBe('curves.DOM.zeroRates');
    expect(curveIssues({ currency: 'DOM', times: [1, 0.5, 0.2], zeroRates: [0, 0, 0] }, 'c').length).toBe(2);
    expect(() => makeCurve(spec).df(-1)).toThrowError(/time must be a finite number of years >= 0/);
  });
});

describe('flatCurve and shiftedCurve', () => {
  it('flat curve: P = e^{−rt}, constant zero and forward, simple forward (e^{rτ} − 1)/τ', () => {
    const c = flatCurve('ASH', 0.02);
    for (let t = 0; t < 30; t += 1.3) {
      expect(Math.abs(c.df(t) - Math.exp(-0.02 * t))).toBeLessThan(1e-16);
      expect(c.instFwd(t)).toBe(0.02);
    }
    expect(Math.abs(c.fwd(1, 1.5) - Math.expm1(0.02 * 0.5) / 0.5)).toBeLessThan(1e-16);
    expect(() => flatCurve('ASH', NaN)).toThrowError(/rate must be a finite number/);
  });

  it('shifts zero rates and forwards in parallel by δ and leaves the original untouched', () => {
    const c = makeCurve(spec);
    const s = shiftedCurve(c, 0.0001);
    for (let t = 0.1; t < 35; t += 0.9) {
      expect(Math.abs(s.zero(t) - c.zero(t) - 0.0001)).toBeLessThan(1e-15);
      expect(Math.abs(s.instFwd(t) - c.instFwd(t) - 0.0001)).toBeLessThan(1e-15);
      expect(Math.abs(s.df(t) / (c.df(t) * Math.exp(-0.0001 * t)) - 1)).toBeLessThan(1e-14);
    }
    expect(Math.abs(c.zero(1) - 0.0262)).toBeLessThan(1e-15);
    expect(shiftedCurve(c, 0).df(7)).toBeCloseTo(c.df(7), 15);
  });
});
