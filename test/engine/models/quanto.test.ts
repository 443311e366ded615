import { describe, expect, it } from 'vitest';
import { bsPrice, quantoEuropean, quantoForward } from '../../../src/engine/models/index.ts';
import { expectClose } from '../../helpers/expectClose.ts';

const haug = {
  S: 100,
  K: 105,
  T: 0.5,
  rDomestic: 0.08,
  rForeign: 0.05,
  q: 0.04,
  volS: 0.2,
  volFx: 0.1,
  rho: 0.3,
};

describe('quanto options', () => {
  it('call with fixed FX 1.5 is 5.3280: Haug (1998) quanto option pp. 105-106 (from memory; QuantLib test-suite/quantooption.cpp)', () => {
    expectClose('quanto call', quantoEuropean({ ...haug, type: 'call', fixedFx: 1.5 }), 5.32803391922, 1e-10);
  });
  it('put per unit of fixed FX is 8.1636: Haug (1998) VBA code as cited by QuantLib test-suite/quantooption.cpp', () => {
    expectClose('quanto put', quantoEuropean({ ...haug, type: 'put', fixedFx: 1 }), 8.16361963469, 1e-10);
  });
  it('quanto forward is 100.2002 (worked from the standard drift adjustment, published.md Sec. 3; not a published number)', () => {
    expectClose('F_Q', quantoForward(haug), 100.200200133, 1e-8);
  });
  it('reduces to Black–Scholes with q + ρσ_Sσ_X − r_f + r_d as yield when ρ = 0 or σ_X = 0 (limit)', () => {
    for (const patch of [{ rho: 0 }, { volFx: 0 }]) {
      const p = { ...haug, ...patch };
      // Drift r_f − q, discounting r_d: BS with r = r_d and q' = r_d − r_f + q.
      const bs = bsPrice({ type: 'call', S: 100, K: 105, T: 0.5, r: 0.08, q: 0.08 - 0.05 + 0.04, vol: 0.2 });
      expectClose(
        `limit ${JSON.stringify(patch)}`,
        quantoEuropean({ ...p, type: 'call', fixedFx: 1 }),
        bs,
        1e-13,
      );
    }
  });
  it('rejects a correlation outside [−1, 1] and a non-positive fixed FX, naming the field', () => {
    expect(() => quantoForward({ ...haug, rho: 1.2 })).toThrow(/quanto\.rho/);
    expect(() => quantoEuropean({ ...haug, type: 'call', fixedFx: 0 })).toThrow(/quanto\.fixedFx/);
  });
});
