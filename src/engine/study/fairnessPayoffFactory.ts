/**
 * Payoff factory (simulation runner interface) for the evidence of fairness: each calibration vanilla as a path
 * payoff, so every variant reprices its own instruments on the study's paths. A vanilla on an equity quoted in a
 * foreign currency is valued in that currency: V_f = E_d[D_d(T) X(T) payoff] / X(0) under the domestic measure
 * (change of numeraire between currencies; Brigo & Mercurio 2006, Sec. 2.10; common practice).
 * Plain description, no mathjs: safe to load in a worker.
 */
import { fail } from '../errors.ts';
import type { EvaluatorContext } from '../simulation/runSpec.ts';
import type { PathBatch, PathEvaluator } from '../simulation/types.ts';

/** One vanilla to reprice. */
export interface FairnessVanilla {
  equity: string;
  expiry: number;
  strike: number;
  isCall: boolean;
}

/** One caplet to reprice: fixing at `expiry` on the simple rate to `expiry + tenor`, per unit notional. */
export interface FairnessCaplet {
  currency: string;
  expiry: number;
  tenor: number;
  strike: number;
}

export interface FairnessDescription {
  vanillas: FairnessVanilla[];
  /** Caplets of the Hull–White fits (valued at the fixing date with the path's own bond price). */
  caplets?: FairnessCaplet[];
  /** Times the main study run has on its grid, so both runs share the same grid (and so the same normals). */
  gridTimes: number[];
}

function desc(d: unknown): FairnessDescription {
  const x = d as FairnessDescription | null;
  if (!x || !Array.isArray(x.vanillas) || x.vanillas.length + (x.caplets?.length ?? 0) === 0)
    fail('E_NO_PAYOFF', 'payoff.description.vanillas', 'must list at least one vanilla or caplet', d);
  return x;
}

/** One evaluator per vanilla. */
export function createEvaluators(description: unknown, context: EvaluatorContext): PathEvaluator[] {
  const d = desc(description);
  const v = context.variant;
  const caplets = (d.caplets ?? []).map((c, i): PathEvaluator => {
    // Caplet paying τ (L − K)^+ at T2, L = (1/P(T1,T2) − 1)/τ fixed at T1: worth P(T1,T2) τ (L − K)^+ at T1
    // (Brigo & Mercurio 2006, Sec. 1.5 and eq. 3.41), discounted with the path's numeraire; a foreign caplet is
    // valued in its own currency through the FX rate as for the vanillas above.
    const k = context.indexOf(c.expiry, `caplets[${i}].expiry`);
    const fx = c.currency === v.domestic ? null : v.fx.find((f) => f.foreign === c.currency);
    if (c.currency !== v.domestic && !fx)
      fail(
        'E_NO_FX',
        `caplets[${i}].currency`,
        `needs an FX rate for ${c.currency} in the variant`,
        c.currency,
      );
    return (b: PathBatch) => {
      const n = b.nPaths;
      const out = new Float64Array(n);
      const P = new Float64Array(n);
      b.bond(c.currency, k, c.expiry + c.tenor, P);
      const o = k * n;
      const X = fx ? b.fx[fx.name]! : null;
      for (let p = 0; p < n; p++) {
        const L = (1 / P[p]! - 1) / c.tenor;
        out[p] =
          P[p]! * c.tenor * Math.max(L - c.strike, 0) * b.discount[o + p]! * (X ? X[o + p]! / X[p]! : 1);
      }
      return out;
    };
  });
  const vanillas = d.vanillas.map((q, i) => {
    const k = context.indexOf(q.expiry, `vanillas[${i}].expiry`);
    const eq = v.equities.find((e) => e.name === q.equity);
    if (!eq)
      fail('E_UNKNOWN_UNDERLYING', `vanillas[${i}].equity`, 'must be an equity of the variant', q.equity);
    const fx = eq.currency === v.domestic ? null : v.fx.find((f) => f.foreign === eq.currency);
    if (eq.currency !== v.domestic && !fx)
      fail(
        'E_NO_FX',
        `vanillas[${i}].equity`,
        `needs an FX rate for ${eq.currency} in the variant`,
        q.equity,
      );
    return (b: PathBatch) => {
      const n = b.nPaths;
      const out = new Float64Array(n);
      const S = b.equity[q.equity]!;
      const o = k * n;
      const X = fx ? b.fx[fx.name]! : null;
      for (let p = 0; p < n; p++) {
        const s = S[o + p]!;
        const pay = q.isCall ? Math.max(s - q.strike, 0) : Math.max(q.strike - s, 0);
        out[p] = pay * b.discount[o + p]! * (X ? X[o + p]! / X[p]! : 1);
      }
      return out;
    };
  });
  return [...vanillas, ...caplets];
}

/** Times the grid must contain. */
export function eventTimes(description: unknown): number[] {
  const d = desc(description);
  return [
    ...new Set([
      ...d.gridTimes,
      ...d.vanillas.map((q) => q.expiry),
      ...(d.caplets ?? []).map((c) => c.expiry),
    ]),
  ].sort((a, b) => a - b);
}

/** Absolute URL of this module, for `RunSpec.payoff.factory`. */
export function fairnessPayoffFactoryUrl(): string {
  return new URL('./fairnessPayoffFactory.ts', import.meta.url).href;
}
