import { describe, it, expect } from 'vitest';
import { bsPrice } from '../../../src/engine/models/blackScholes.ts';
import { makeBatchContext } from '../../../src/engine/simulation/batch.ts';
import { testPayoffFactory } from '../../../src/engine/simulation/testPayoffs.ts';
import { inProcessExecutor, runSimulation } from '../../../src/engine/simulation/runSimulation.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';
import { bsDyn, expectWithinSe, oneEquity, run, spec } from './helpers.ts';

const flatLv = {
  kind: 'localvol' as const,
  times: [0, 1, 3],
  logK: [-1, 0, 1],
  values: [
    [0.25, 0.25, 0.25],
    [0.25, 0.25, 0.25],
    [0.25, 0.25, 0.25],
  ],
};
const call = [{ kind: 'call' as const, equity: 'A', strike: 95, expiry: 2 }];

describe('local volatility', () => {
  it('a flat local-vol surface prices like Black–Scholes and pairs with it path by path', async () => {
    // Limit: constant local vol is Black–Scholes, and log-Euler is exact for it (common practice).
    const lv = oneEquity({ id: 'lv', spot: 100, r: 0.03, q: 0.01, dynamics: flatLv });
    const bs = oneEquity({ id: 'bs', spot: 100, r: 0.03, q: 0.01, dynamics: bsDyn(0.25) });
    const r = await run(spec([lv, bs], call, { maxStep: 0.1, paths: 40_000 }));
    expectWithinSe(
      r,
      0,
      bsPrice({ type: 'call', S: 100, K: 95, T: 2, r: 0.03, q: 0.01, vol: 0.25 }),
      0.16,
      'flat local vol',
    );
    expect(r.sums.mean[0]!).toBeCloseTo(r.sums.mean[1]!, 9);
  });

  it('accepts a plugged-in local-vol function in process', async () => {
    const lv = oneEquity({ id: 'lv', spot: 100, r: 0.03, q: 0.01, dynamics: flatLv });
    const s = spec([lv], call, { maxStep: 0.1, paths: 4000 });
    const ref = await run(s);
    const plugged = await runSimulation(
      s,
      inProcessExecutor({ localVol: { A: (_t, _s, out) => out.fill(0.25) } }),
    );
    expect(plugged.sums.mean[0]).toBe(ref.sums.mean[0]);
    const higher = await runSimulation(
      s,
      inProcessExecutor({ localVol: { A: (_t, _s, out) => out.fill(0.35) } }),
    );
    expect(higher.sums.mean[0]!).toBeGreaterThan(ref.sums.mean[0]!);
  });
});

function contextError(v: VariantSpec): EngineError {
  try {
    makeBatchContext(spec([v], call, { maxStep: 0.5, paths: 1000 }), testPayoffFactory);
  } catch (e) {
    expect(e).toBeInstanceOf(EngineError);
    return e as EngineError;
  }
  throw new Error('expected an EngineError');
}

describe('model checks before simulation', () => {
  const hes = { kind: 'heston' as const, v0: 0.04, kappa: 1, theta: 0.04, sigma: 0.5, rho: -0.8 };
  it('rejects rho(S,v)^2 + rho(S,r)^2 > 1 naming both correlations', () => {
    const e = contextError(
      oneEquity({ spot: 100, r: 0.02, dynamics: hes, hw: { a: 0.05, sigma: 0.01 }, rhoSr: 0.7 }),
    );
    expect(e.message).toMatch(/eq:A\|var:A and eq:A\|rate:DOM/);
  });
  it('rejects a non-zero variance–rate correlation under QE and points to the Euler scheme', () => {
    const v = oneEquity({ spot: 100, r: 0.02, dynamics: hes, hw: { a: 0.05, sigma: 0.01 } });
    v.correlation = {
      names: ['var:A', 'rate:DOM'],
      matrix: [
        [1, 0.2],
        [0.2, 1],
      ],
    };
    expect(contextError(v).message).toMatch(/var:A\|rate:DOM must be 0 under the QE scheme.*euler/);
    expect(() =>
      makeBatchContext(
        spec([{ ...v, hestonScheme: 'euler' }], call, { maxStep: 0.5, paths: 1000 }),
        testPayoffFactory,
      ),
    ).not.toThrow();
  });
  it('rejects a correlation matrix that is not positive semi-definite', () => {
    const v: VariantSpec = {
      ...oneEquity({ spot: 100, r: 0.02, dynamics: bsDyn(0.2) }),
      equities: ['A', 'B', 'C'].map((name) => ({
        name,
        currency: 'DOM',
        spot: 100,
        divYield: 0,
        dynamics: bsDyn(0.2),
      })),
      correlation: {
        names: ['eq:A', 'eq:B', 'eq:C'],
        matrix: [
          [1, 0.9, -0.9],
          [0.9, 1, 0.9],
          [-0.9, 0.9, 1],
        ],
      },
    };
    const e = contextError(v);
    expect(e.code).toBe('E_NOT_PSD');
    expect(e.message).toMatch(/Higham/);
  });
  it('names a bad spot, a missing FX rate for a foreign equity, and a missing domestic curve', () => {
    expect(contextError(oneEquity({ spot: 0, r: 0.02, dynamics: bsDyn(0.2) })).message).toMatch(
      /equities\[0\]\.spot/,
    );
    const v = oneEquity({ spot: 100, r: 0.02, dynamics: bsDyn(0.2) });
    expect(contextError({ ...v, equities: [{ ...v.equities[0]!, currency: 'ASH' }] }).message).toMatch(
      /rates must contain the currency ASH/,
    );
    expect(contextError({ ...v, domestic: 'ASH' }).message).toMatch(/domestic currency ASH/);
  });
  it('warns (and still runs) when a Heston parameter set violates the Feller condition', () => {
    const ctx = makeBatchContext(
      spec([oneEquity({ spot: 100, r: 0.02, dynamics: { ...hes, sigma: 1 } })], call, {
        maxStep: 0.5,
        paths: 1000,
      }),
      testPayoffFactory,
    );
    expect(ctx.warnings.map((w) => [w.code, w.severity])).toEqual([['W_FELLER', 'warning']]);
  });
});
