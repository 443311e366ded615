import { describe, expect, it } from 'vitest';
import { bachelierImpliedVol, bachelierPrice, black76 } from '../../../src/engine/models/index.ts';
import { integrateAdaptive } from '../../../src/engine/math/quadrature.ts';
import { normPdf } from '../../../src/engine/math/normal.ts';
import { expectClose } from '../../helpers/expectClose.ts';

describe('Bachelier (normal) model', () => {
  it('at the money equals σ√T/√(2π) times the annuity (common practice)', () => {
    expectClose(
      'ATM',
      bachelierPrice({ type: 'call', F: 0.03, K: 0.03, T: 2, vol: 0.008, annuity: 4 }),
      (4 * 0.008 * Math.sqrt(2)) / Math.sqrt(2 * Math.PI),
      1e-16,
    );
  });
  it('equals the expectation of the payoff under the Gaussian forward by quadrature (second method)', () => {
    const F = 0.025;
    const s = 0.009 * Math.sqrt(3);
    for (const K of [-0.005, 0.01, 0.025, 0.05]) {
      const q = integrateAdaptive((z) => normPdf(z) * Math.max(F + s * z - K, 0), -12, 12, { absTol: 1e-16 });
      expectClose(`K=${K}`, bachelierPrice({ type: 'call', F, K, T: 3, vol: 0.009 }), q, 1e-13);
    }
  });
  it('satisfies call − put = A(F − K) for negative rates too (parity, common practice)', () => {
    const a = { F: -0.002, K: 0.001, T: 1.5, vol: 0.006, annuity: 2.5 };
    expectClose(
      'parity',
      bachelierPrice({ ...a, type: 'call' }) - bachelierPrice({ ...a, type: 'put' }),
      2.5 * -0.003,
      1e-16,
    );
  });
  it('is close to Black-76 with σ_N = σ_B·F for small lognormal vol at the money (limit)', () => {
    const b = black76({ type: 'call', F: 100, K: 100, T: 1, df: 1, vol: 0.001 });
    const n = bachelierPrice({ type: 'call', F: 100, K: 100, T: 1, vol: 0.1 });
    expectClose('small vol', n, b, 1e-8);
  });
  it('implied normal vol round-trips from 1 bp to 300 bp, strikes ±300 bp around the forward, T 0.1..30', () => {
    let checked = 0;
    for (const T of [0.1, 1, 10, 30])
      for (const vol of [0.0001, 0.002, 0.008, 0.03])
        for (const dK of [-0.03, -0.01, -0.001, 0, 0.002, 0.01, 0.03])
          for (const type of ['call', 'put'] as const) {
            const p = { type, F: 0.02, K: 0.02 + dK, T, annuity: 1 };
            const price = bachelierPrice({ ...p, vol });
            const intrinsic = Math.max(type === 'call' ? -dK : dK, 0);
            if (!(price - intrinsic > 1e-12 * Math.max(price, 1e-300)) || !(price - intrinsic > 1e-300))
              continue;
            const iv = bachelierImpliedVol({ ...p, price });
            const vega = Math.sqrt(T) * normPdf(dK / (vol * Math.sqrt(T)));
            const tol = 1e-11 * vol + (1e-15 * Math.max(price, 1e-3)) / Math.max(vega, 1e-300);
            if (Math.abs(iv - vol) > tol)
              throw new Error(`T=${T} vol=${vol} dK=${dK} ${type}: price ${price}, iv ${iv}, tol ${tol}`);
            checked++;
          }
    expect(checked).toBeGreaterThan(150);
  });
  it('rejects a price below intrinsic and a negative vol, naming the field', () => {
    expect(() => bachelierImpliedVol({ type: 'call', F: 0.03, K: 0.02, T: 1, price: 0.005 })).toThrow(
      /bachelier\.price/,
    );
    expect(() => bachelierPrice({ type: 'call', F: 0.03, K: 0.02, T: 1, vol: -0.01 })).toThrow(
      /bachelier\.vol/,
    );
  });
});
