/**
 * The built-in payoff factory for tests, benchmarks and the `simulate` command ({@link BUILTIN_TEST_PAYOFFS}).
 * Every evaluator returns the domestic present value on each path: cash flow × 1/B(T) (or × P(0,T) under
 * deterministic rates), as read from the batch's `discount`.
 */
import type { PathBatch, PathEvaluator } from './types.ts';
import type { EvaluatorContext, PayoffFactory } from './runSpec.ts';
import { fail } from '../errors.ts';

/** One test payoff. Foreign equities pay in domestic units one for one (a quanto with fixed rate 1). */
export type TestPayoff =
  /** European call or put on an equity. */
  | { kind: 'call' | 'put'; equity: string; strike: number; expiry: number }
  /** Domestic zero-coupon bond paying `notional` (default 1) at `maturity`; with `observe`, valued as 1/B(t)·P(t,T). */
  | { kind: 'zcb'; maturity: number; observe?: number; notional?: number }
  /** Option at `expiry` on the domestic zero-coupon bond maturing at `maturity`: N (±(P(T,S) − K))⁺. */
  | { kind: 'zbo'; type: 'call' | 'put'; expiry: number; maturity: number; strike: number; notional?: number }
  /** Domestic caplet: pays N τ (L − K)⁺ at `payment`, L the simple rate fixed at `fixing`; τ = payment − fixing. */
  | { kind: 'caplet'; fixing: number; payment: number; strike: number; notional?: number }
  /** S(T) paid at T in domestic units (for a foreign equity, the quanto forward times P_d(0,T)). */
  | { kind: 'quantoForward'; equity: string; expiry: number }
  /** S(T)·X(T)/B(T) (X = 1 for a domestic equity): a martingale test, exact value S0·X0·e^{−qT}. */
  | { kind: 'discountedAsset'; equity: string; time: number }
  /** X(T)/B(T): FX forward in domestic value, exact X0·P_f(0,T). */
  | { kind: 'fxForward'; fx: string; expiry: number };

function list(description: unknown): TestPayoff[] {
  const arr = Array.isArray(description) ? description : [description];
  if (arr.length === 0)
    fail('E_NO_PAYOFF', 'payoff.description', 'must list at least one test payoff', description);
  return arr as TestPayoff[];
}

function timesOf(p: TestPayoff): number[] {
  switch (p.kind) {
    case 'call':
    case 'put':
    case 'quantoForward':
    case 'fxForward':
      return [p.expiry];
    case 'zcb':
      return p.observe !== undefined ? [p.observe] : [p.maturity];
    case 'caplet':
      return [p.fixing];
    case 'zbo':
      return [p.expiry];
    case 'discountedAsset':
      return [p.time];
    default:
      return fail(
        'E_PAYOFF_KIND',
        'payoff.description.kind',
        'must be call, put, zcb, zbo, caplet, quantoForward, discountedAsset or fxForward',
        (p as { kind: unknown }).kind,
      );
  }
}

function need<T>(x: T | undefined, field: string, what: string, value: unknown): T {
  if (x === undefined) fail('E_PAYOFF_NAME', field, `must name ${what} of the variant`, value);
  return x;
}

function evaluator(p: TestPayoff, i: number, ctx: EvaluatorContext): PathEvaluator {
  const f = `payoff.description[${i}]`;
  const dom = ctx.variant.domestic;
  switch (p.kind) {
    case 'call':
    case 'put': {
      const k = ctx.indexOf(p.expiry, `${f}.expiry`);
      const sign = p.kind === 'call' ? 1 : -1;
      return (b: PathBatch) => {
        const s = need(b.equity[p.equity], `${f}.equity`, 'an equity', p.equity);
        const n = b.nPaths;
        const out = new Float64Array(n);
        const o = k * n;
        for (let q = 0; q < n; q++) {
          const x = sign * (s[o + q]! - p.strike);
          out[q] = x > 0 ? x * b.discount[o + q]! : 0;
        }
        return out;
      };
    }
    case 'zcb': {
      const t = p.observe ?? p.maturity;
      const k = ctx.indexOf(t, `${f}.${p.observe !== undefined ? 'observe' : 'maturity'}`);
      const notional = p.notional ?? 1;
      return (b) => {
        const n = b.nPaths;
        const out = new Float64Array(n);
        b.bond(dom, k, p.maturity, out);
        const o = k * n;
        for (let q = 0; q < n; q++) out[q] = notional * out[q]! * b.discount[o + q]!;
        return out;
      };
    }
    case 'zbo': {
      const k = ctx.indexOf(p.expiry, `${f}.expiry`);
      const sign = p.type === 'call' ? 1 : -1;
      const notional = p.notional ?? 1;
      return (b) => {
        const n = b.nPaths;
        const out = new Float64Array(n);
        b.bond(dom, k, p.maturity, out);
        const o = k * n;
        for (let q = 0; q < n; q++) {
          const x = sign * (out[q]! - p.strike);
          out[q] = x > 0 ? notional * x * b.discount[o + q]! : 0;
        }
        return out;
      };
    }
    case 'caplet': {
      const k = ctx.indexOf(p.fixing, `${f}.fixing`);
      const tau = p.payment - p.fixing;
      if (!(tau > 0)) fail('E_CAPLET_DATES', `${f}.payment`, 'must be after the fixing', p.payment);
      const notional = p.notional ?? 1;
      return (b) => {
        const n = b.nPaths;
        const out = new Float64Array(n);
        b.bond(dom, k, p.payment, out);
        const o = k * n;
        for (let q = 0; q < n; q++) {
          const P = out[q]!;
          const L = (1 / P - 1) / tau;
          // Paid at T2, valued at T1 as P(T1,T2)·N τ (L − K)⁺ (tower property), then discounted to 0.
          out[q] = L > p.strike ? notional * tau * (L - p.strike) * P * b.discount[o + q]! : 0;
        }
        return out;
      };
    }
    case 'quantoForward': {
      const k = ctx.indexOf(p.expiry, `${f}.expiry`);
      return (b) => discountedProduct(b, k, need(b.equity[p.equity], `${f}.equity`, 'an equity', p.equity));
    }
    case 'discountedAsset': {
      const k = ctx.indexOf(p.time, `${f}.time`);
      const eq = ctx.variant.equities.find((e) => e.name === p.equity);
      const fxName =
        eq && eq.currency !== dom ? ctx.variant.fx.find((x) => x.foreign === eq.currency)?.name : undefined;
      return (b) =>
        discountedProduct(
          b,
          k,
          need(b.equity[p.equity], `${f}.equity`, 'an equity', p.equity),
          fxName ? b.fx[fxName]! : undefined,
        );
    }
    case 'fxForward': {
      const k = ctx.indexOf(p.expiry, `${f}.expiry`);
      return (b) => discountedProduct(b, k, need(b.fx[p.fx], `${f}.fx`, 'an FX rate', p.fx));
    }
  }
}

/**
 * a(t_k)·c(t_k)·discount(t_k) on every path (c = 1 when absent): the present value of an asset observed at date
 * index `k`, read from path arrays laid out as [date][path]. One loop shared by the forward and martingale payoffs.
 */
function discountedProduct(b: PathBatch, k: number, a: Float64Array, c?: Float64Array): Float64Array {
  const n = b.nPaths;
  const out = new Float64Array(n);
  const o = k * n;
  if (c) for (let q = 0; q < n; q++) out[q] = a[o + q]! * c[o + q]! * b.discount[o + q]!;
  else for (let q = 0; q < n; q++) out[q] = a[o + q]! * b.discount[o + q]!;
  return out;
}

/** The built-in factory. */
export const testPayoffFactory: PayoffFactory = {
  createEvaluators: (description, ctx) => list(description).map((p, i) => (timesOf(p), evaluator(p, i, ctx))),
  eventTimes: (description) => list(description).flatMap(timesOf),
};
