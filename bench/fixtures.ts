/** Shared benchmark inputs (invented demo scenario). */
import type { VariantSpec } from '../src/engine/simulation/types.ts';

/** Heston equity ALDR with Hull–White DOM rates: the hybrid variant the deal and exercise benchmarks run on. */
export function benchHybridVariant(id: string): VariantSpec {
  return {
    id,
    label: 'Heston + Hull–White DOM',
    domestic: 'DOM',
    equities: [
      {
        name: 'ALDR',
        currency: 'DOM',
        spot: 4200,
        divYield: 0.018,
        dynamics: { kind: 'heston', v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.65 },
      },
    ],
    rates: {
      DOM: {
        curve: { currency: 'DOM', times: [1, 10], zeroRates: [0.03, 0.034] },
        hw: { a: 0.05, sigma: 0.009 },
      },
    },
    fx: [],
    correlation: {
      names: ['eq:ALDR', 'rate:DOM'],
      matrix: [
        [1, 0.2],
        [0.2, 1],
      ],
    },
  };
}
