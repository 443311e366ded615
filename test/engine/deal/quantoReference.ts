/**
 * Quanto call closed form for the tests: value = Ē e^{−r_d T} [F_Q N(d1) − K N(d2)], F_Q = S e^{(r_f − q − ρσ_Sσ_X)T},
 * d1,2 = (ln(F_Q/K) ± σ_S² T/2)/(σ_S √T) (Haug 1998, pp. 105–106; the worked F_Q in shared/reference/published.md).
 */
import { normCdf } from '../../../src/engine/math/normal.ts';

export function quantoPrice(p: {
  S: number;
  K: number;
  T: number;
  rd: number;
  rf: number;
  q: number;
  volS: number;
  volX: number;
  rho: number;
  fixed: number;
}): number {
  const F = p.S * Math.exp((p.rf - p.q - p.rho * p.volS * p.volX) * p.T);
  const sd = p.volS * Math.sqrt(p.T);
  const d1 = (Math.log(F / p.K) + 0.5 * sd * sd) / sd;
  return p.fixed * Math.exp(-p.rd * p.T) * (F * normCdf(d1) - p.K * normCdf(d1 - sd));
}
