/**
 * Compiled deal → vectorised evaluator over a batch of paths. Each program node becomes a closure that fills a
 * whole Float64Array of nPaths values per event date; no eval, no generated code, and no mathjs (this module
 * imports only plain types, so a worker can load it cheaply).
 *
 * Semantics, per path, stepping through the simulation grid in time order:
 *  1. running minima / maxima / averages take the level at every observation date (inclusive of today's);
 *  2. events due at this date, in file order: the event fires where the deal is alive and its condition is
 *     non-zero; it pays notional × amount (converted: compo at the path's FX rate, quanto at the fixed rate),
 *     discounted with the path's numeraire `PathBatch.discount` times exp(−s t) for a funding spread s; then its
 *     state updates apply (all read the state as it was before the event); then `terminate` ends the deal;
 *  3. exercise dates at this date are recorded after that date's events (coupons due on a call date are paid).
 */
import { EngineError, fail } from '../errors.ts';
import type { PathBatch, PathEvaluator } from '../simulation/types.ts';
import type { CompiledDeal, CompiledPayment, LevelSource, Program, ProgramNode } from './types.ts';
import { exp, log, pow } from '../math/detMath.ts';

/** Options for an evaluator. */
export interface DealEvaluatorOptions {
  /** Path name of an equity when it differs from its market name (keyed by the deal's equity id). */
  equityNames?: Record<string, string>;
  /**
   * Batch FX key of a pair written `PER/UNITS` (units of UNITS per one PER), when the paths name it differently;
   * default: the key `PER/UNITS` itself.
   */
  fxNames?: Record<string, string>;
  /** Largest gap (years) between a deal date and the nearest grid time; default half a day (0.5/365). */
  gridTolerance?: number;
}

/** One event's discounted cash flows on one date (domestic, per path, already multiplied by the notional). */
export interface CashFlowColumn {
  time: number;
  event: string;
  values: Float64Array;
}

/** What the regression of an early-exercise method needs at one exercise date. */
export interface ExerciseColumn {
  label: string;
  by: 'issuer' | 'holder';
  time: number;
  /** Grid step of the date. */
  step: number;
  /** Discounted cash paid on exercise (0 where the deal has already ended). */
  value: Float64Array;
  /** 1 where the deal is still alive after that date's events, 0 otherwise. */
  alive: Float64Array;
  /**
   * Regression variables at the date: `eq:NAME` levels, `var:NAME` variances (stochastic vol only), `rate:CCY` short
   * rates, `fx:NAME` FX levels, `state:NAME` state variables.
   */
  features: Record<string, Float64Array>;
}

/** Per-path detail of one batch. */
export interface DetailedEvaluation {
  nPaths: number;
  /** Sum of all discounted cash flows per path, ignoring exercise rights (what the PathEvaluator returns). */
  total: Float64Array;
  /** One column per event occurrence that pays, in time order. */
  flows: CashFlowColumn[];
  exercise: ExerciseColumn[];
}

interface Env {
  batch: PathBatch;
  n: number;
  k: number;
  t: number;
  dt: number;
  index: number;
  count: number;
  running: Float64Array[];
  state: Map<string, Float64Array>;
  stepOf: (t: number, what: string) => number;
  fxAt: (units: string, per: string, k: number) => Float64Array;
}

type NodeFn = (env: Env, vals: Float64Array[], out: Float64Array) => Float64Array;

const constFill =
  (v: number): NodeFn =>
  (env, _vals, out) =>
    out.fill(v, 0, env.n);

function levelFn(src: LevelSource, at: 'now' | 'start', names: Map<string, string>): NodeFn {
  if (src.kind === 'equity') {
    const pathName = names.get(src.name) ?? src.name;
    return (env) => {
      const s = env.batch.equity[pathName];
      if (!s)
        fail(
          'E_PATH_MISSING',
          `paths.equity.${pathName}`,
          'must be simulated for this deal',
          Object.keys(env.batch.equity),
        );
      const k = at === 'now' ? env.k : 0;
      return s.subarray(k * env.n, (k + 1) * env.n);
    };
  }
  return (env) => env.fxAt(src.units, src.per, at === 'now' ? env.k : 0);
}

function nodeFn(node: ProgramNode, names: Map<string, string>, nodes: readonly ProgramNode[]): NodeFn {
  switch (node.op) {
    case 'num':
      return constFill(node.value);
    case 'level':
      return levelFn(node.source, node.at, names);
    case 'state':
      return (env) => env.state.get(node.name)!;
    case 'time':
      return (env, _v, out) => out.fill(env.t, 0, env.n);
    case 'accrual':
      return (env, _v, out) => out.fill(env.dt, 0, env.n);
    case 'index':
      return (env, _v, out) => out.fill(env.index, 0, env.n);
    case 'count':
      return (env, _v, out) => out.fill(env.count, 0, env.n);
    case 'running':
      return (env) => env.running[node.slot]!;
    case 'shortRate':
      return (env) => {
        const s = env.batch.shortRate[node.currency];
        if (!s)
          fail(
            'E_PATH_MISSING',
            `paths.shortRate.${node.currency}`,
            'must be simulated for this deal',
            Object.keys(env.batch.shortRate),
          );
        return s.subarray(env.k * env.n, (env.k + 1) * env.n);
      };
    case 'fixing':
      if (node.known) {
        // a period that began before the valuation date: its rate was fixed then (the deal's history)
        const known = node.known;
        const tau = node.tau;
        return (env, _v, out) => {
          const hit = known.find((x) => Math.abs(x.time - env.t) <= 1e-9);
          if (hit) return out.fill(hit.rate, 0, env.n);
          const k0 = env.stepOf(
            Math.max(0, env.t - (tau ?? env.dt)),
            `fixing date ${env.t - (tau ?? env.dt)}`,
          );
          env.batch.bond(node.currency, k0, env.t, out);
          for (let p = 0; p < env.n; p++) out[p] = (1 / out[p]! - 1) / (tau ?? env.dt);
          return out;
        };
      }
      // Simple (money-market) rate set at t−τ for [t−τ, t]: L = (1/P(t−τ, t) − 1)/τ, Brigo & Mercurio (2006) eq. (1.11).
      return (env, _v, out) => {
        const tau = node.tau ?? env.dt;
        const k0 = env.stepOf(Math.max(0, env.t - tau), `fixing date ${env.t - tau}`);
        env.batch.bond(node.currency, k0, env.t, out);
        for (let p = 0; p < env.n; p++) out[p] = (1 / out[p]! - 1) / tau;
        return out;
      };
    case 'termRate':
      // Same formula over [t, t+τ], set at t (Brigo & Mercurio 2006, eq. (1.11)).
      return (env, _v, out) => {
        env.batch.bond(node.currency, env.k, env.t + node.tau, out);
        for (let p = 0; p < env.n; p++) out[p] = (1 / out[p]! - 1) / node.tau;
        return out;
      };
    case 'swapRate': {
      // Par swap rate S = (1 − P(t, t_N)) / Σ_j δ P(t, t_j), δ = 1/perYear (Brigo & Mercurio 2006, eq. (1.25)).
      const m = Math.round(node.years * node.perYear);
      const delta = 1 / node.perYear;
      let tmp = new Float64Array(0);
      return (env, _v, out) => {
        if (tmp.length < env.n) tmp = new Float64Array(env.n);
        out.fill(0, 0, env.n);
        for (let j = 1; j <= m; j++) {
          env.batch.bond(node.currency, env.k, env.t + j * delta, tmp);
          for (let p = 0; p < env.n; p++) out[p]! += delta * tmp[p]!;
        }
        for (let p = 0; p < env.n; p++) out[p] = (1 - tmp[p]!) / out[p]!;
        return out;
      };
    }
    case 'bond':
      return (env, _v, out) => {
        env.batch.bond(node.currency, env.k, node.maturity, out);
        return out;
      };
    case 'unary': {
      const a = node.a;
      switch (node.fn) {
        case 'neg':
          return (env, v, out) => map1(env.n, v[a]!, out, (x) => -x);
        case 'not':
          return (env, v, out) => map1(env.n, v[a]!, out, (x) => (x === 0 ? 1 : 0));
        case 'abs':
          return (env, v, out) => map1(env.n, v[a]!, out, Math.abs);
        case 'exp':
          return (env, v, out) => map1(env.n, v[a]!, out, exp);
        case 'log':
          return (env, v, out) => map1(env.n, v[a]!, out, log);
        case 'sqrt':
          return (env, v, out) => map1(env.n, v[a]!, out, Math.sqrt);
        case 'floor':
          return (env, v, out) => map1(env.n, v[a]!, out, Math.floor);
      }
      break;
    }
    case 'binary': {
      const ca = nodes[node.a]!.op === 'num' ? (nodes[node.a] as { value: number }).value : null;
      const cb = nodes[node.b]!.op === 'num' ? (nodes[node.b] as { value: number }).value : null;
      return binaryScalarFn(node.fn, node.a, node.b, ca, cb) ?? binaryFn(node.fn, node.a, node.b);
    }
    case 'nary': {
      const args = node.args;
      const isMin = node.fn === 'min';
      return (env, v, out) => {
        const n = env.n;
        const first = v[args[0]!]!;
        for (let p = 0; p < n; p++) out[p] = first[p]!;
        for (let j = 1; j < args.length; j++) {
          const x = v[args[j]!]!;
          if (isMin) for (let p = 0; p < n; p++) out[p] = x[p]! < out[p]! ? x[p]! : out[p]!;
          else for (let p = 0; p < n; p++) out[p] = x[p]! > out[p]! ? x[p]! : out[p]!;
        }
        return out;
      };
    }
    case 'select': {
      const { c, a, b } = node;
      return (env, v, out) => {
        const cc = v[c]!;
        const aa = v[a]!;
        const bb = v[b]!;
        for (let p = 0; p < env.n; p++) out[p] = cc[p] !== 0 ? aa[p]! : bb[p]!;
        return out;
      };
    }
  }
  throw new EngineError('E_INTERNAL', `unknown program node ${(node as { op: string }).op}`);
}

function map1(n: number, a: Float64Array, out: Float64Array, f: (x: number) => number): Float64Array {
  for (let p = 0; p < n; p++) out[p] = f(a[p]!);
  return out;
}

/**
 * Binary operations with one constant operand read the scalar instead of a filled buffer (half the memory traffic);
 * null when the operation has no such form here.
 */
function binaryScalarFn(
  fn: string,
  ia: number,
  ib: number,
  ca: number | null,
  cb: number | null,
): NodeFn | null {
  if (cb !== null && ca === null) {
    const c = cb;
    switch (fn) {
      case 'add':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! + c;
          return o;
        };
      case 'sub':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! - c;
          return o;
        };
      case 'mul':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! * c;
          return o;
        };
      case 'div':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! / c;
          return o;
        };
      case 'lt':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! < c ? 1 : 0;
          return o;
        };
      case 'le':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! <= c ? 1 : 0;
          return o;
        };
      case 'gt':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! > c ? 1 : 0;
          return o;
        };
      case 'ge':
        return (env, v, o) => {
          const a = v[ia]!;
          for (let p = 0; p < env.n; p++) o[p] = a[p]! >= c ? 1 : 0;
          return o;
        };
    }
  }
  if (ca !== null && cb === null) {
    const c = ca;
    switch (fn) {
      case 'add':
        return (env, v, o) => {
          const b = v[ib]!;
          for (let p = 0; p < env.n; p++) o[p] = c + b[p]!;
          return o;
        };
      case 'sub':
        return (env, v, o) => {
          const b = v[ib]!;
          for (let p = 0; p < env.n; p++) o[p] = c - b[p]!;
          return o;
        };
      case 'mul':
        return (env, v, o) => {
          const b = v[ib]!;
          for (let p = 0; p < env.n; p++) o[p] = c * b[p]!;
          return o;
        };
    }
  }
  return null;
}

function binaryFn(fn: string, ia: number, ib: number): NodeFn {
  const loop =
    (f: (a: Float64Array, b: Float64Array, out: Float64Array, n: number) => void): NodeFn =>
    (env, v, out) => {
      f(v[ia]!, v[ib]!, out, env.n);
      return out;
    };
  switch (fn) {
    case 'add':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! + b[p]!;
      });
    case 'sub':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! - b[p]!;
      });
    case 'mul':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! * b[p]!;
      });
    case 'div':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! / b[p]!;
      });
    case 'pow':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = pow(a[p]!, b[p]!);
      });
    case 'lt':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! < b[p]! ? 1 : 0;
      });
    case 'le':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! <= b[p]! ? 1 : 0;
      });
    case 'gt':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! > b[p]! ? 1 : 0;
      });
    case 'ge':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! >= b[p]! ? 1 : 0;
      });
    case 'eq':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! === b[p]! ? 1 : 0;
      });
    case 'ne':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! !== b[p]! ? 1 : 0;
      });
    case 'and':
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! !== 0 && b[p]! !== 0 ? 1 : 0;
      });
    default:
      return loop((a, b, o, n) => {
        for (let p = 0; p < n; p++) o[p] = a[p]! !== 0 || b[p]! !== 0 ? 1 : 0;
      });
  }
}

/** A program turned into closures with its own buffers. */
class Runner {
  private readonly fns: NodeFn[];
  private bufs: Float64Array[] = [];
  private readonly vals: Float64Array[];
  constructor(
    readonly program: Program,
    names: Map<string, string>,
  ) {
    this.fns = program.nodes.map((n) => nodeFn(n, names, program.nodes));
    this.vals = new Array<Float64Array>(program.nodes.length);
  }
  run(env: Env): Float64Array {
    const nodes = this.program.nodes;
    if (this.bufs.length === 0 || this.bufs[0]!.length < env.n) {
      this.bufs = this.fns.map(() => new Float64Array(env.n));
      // constants are filled once per buffer size
      nodes.forEach((node, i) => {
        if (node.op === 'num') this.vals[i] = this.bufs[i]!.fill(node.value);
      });
    }
    for (let i = 0; i < this.fns.length; i++)
      if (nodes[i]!.op !== 'num') this.vals[i] = this.fns[i]!(env, this.vals, this.bufs[i]!);
    return this.vals[this.fns.length - 1]!;
  }
}

interface Occurrence {
  step: number;
  time: number;
  kind: 0 | 1;
  idx: number;
  dateIdx: number;
}

/** Builds a reusable evaluator; `evaluate` returns the per-path total, `detailed` the full breakdown. */
export function makeDealRunner(compiled: CompiledDeal, opts: DealEvaluatorOptions = {}) {
  const names = new Map<string, string>();
  for (const e of compiled.equities) names.set(e.id, opts.equityNames?.[e.id] ?? e.marketName);
  const tol = opts.gridTolerance ?? 0.5 / 365;
  const events = compiled.events.map((e) => ({
    e,
    when: e.when ? new Runner(e.when, names) : null,
    pay: e.pay.map((p) => ({ p, r: new Runner(p.amount, names) })),
    set: e.set.map((s) => ({ name: s.name, r: new Runner(s.value, names) })),
  }));
  const exercises = compiled.exercise.map((x) => ({ x, r: new Runner(x.amount.amount, names) }));
  const dom = compiled.currency;
  const runLevels = compiled.running.map((r) => levelFn(r.source, 'now', names));

  function run(batch: PathBatch, detailed: boolean): DetailedEvaluation {
    const n = batch.nPaths;
    const times = batch.times;
    const K = times.length;
    const stepOf = (t: number, what: string): number => {
      let lo = 0;
      let hi = K - 1;
      while (hi - lo > 1) {
        const mid = (lo + hi) >> 1;
        if (times[mid]! <= t) lo = mid;
        else hi = mid;
      }
      const k = Math.abs(times[lo]! - t) <= Math.abs(times[hi]! - t) ? lo : hi;
      if (Math.abs(times[k]! - t) > tol)
        fail(
          'E_DATE_NOT_ON_GRID',
          'paths.times',
          `must contain the ${what} (t = ${t.toFixed(6)} years)`,
          times[k],
          'build the grid with the deal analysis gridTimes',
        );
      return k;
    };
    const fxCache = new Map<string, Float64Array>();
    const fxSeries = (per: string, units: string): Float64Array | undefined =>
      batch.fx[opts.fxNames?.[`${per}/${units}`] ?? `${per}/${units}`];
    const domesticValue = (ccy: string): ((k: number, p: number) => number) => {
      if (ccy === dom) return () => 1;
      const direct = fxSeries(ccy, dom);
      if (direct) return (k, p) => direct[k * n + p]!;
      const inv = fxSeries(dom, ccy);
      if (inv) return (k, p) => 1 / inv[k * n + p]!;
      return fail(
        'E_PATH_MISSING',
        `paths.fx.${ccy}/${dom}`,
        `must be simulated (units of ${dom} per ${ccy})`,
        Object.keys(batch.fx),
      );
    };
    const fxAt = (units: string, per: string, k: number): Float64Array => {
      const key = `${units}|${per}|${k}`;
      const hit = fxCache.get(key);
      if (hit) return hit;
      let out: Float64Array;
      const direct = fxSeries(per, units);
      if (direct) out = direct.subarray(k * n, (k + 1) * n);
      else {
        // units per `per` = (dom per `per`) / (dom per `units`): triangulation through the numeraire currency.
        const a = domesticValue(per);
        const b = domesticValue(units);
        out = new Float64Array(n);
        for (let p = 0; p < n; p++) out[p] = a(k, p) / b(k, p);
      }
      fxCache.set(key, out);
      return out;
    };
    const env: Env = {
      batch,
      n,
      k: 0,
      t: 0,
      dt: 0,
      index: 0,
      count: 0,
      running: compiled.running.map(() => new Float64Array(n)),
      state: new Map(compiled.state.map((s) => [s.name, new Float64Array(n).fill(s.initial)])),
      stepOf,
      fxAt,
    };
    // Running observation steps.
    const runSteps = compiled.running.map((r) =>
      r.times === 'grid' ? null : new Set(r.times.map((t) => stepOf(t, 'observation date'))),
    );
    // a deal under way: running values continue from the observations before the valuation date
    const runCount = compiled.running.map((r) => r.seed?.count ?? 0);
    compiled.running.forEach((r, i) => {
      if (r.seed) env.running[i]!.fill(r.seed.value);
    });
    const scratch = new Float64Array(n);
    const occ: Occurrence[] = [];
    compiled.events.forEach((e, idx) =>
      e.times.forEach((t, dateIdx) =>
        occ.push({ step: stepOf(t, `date of ${e.label}`), time: t, kind: 0, idx, dateIdx }),
      ),
    );
    compiled.exercise.forEach((x, idx) =>
      x.times.forEach((t, dateIdx) =>
        occ.push({ step: stepOf(t, `date of ${x.label}`), time: t, kind: 1, idx, dateIdx }),
      ),
    );
    occ.sort((a, b) => a.step - b.step || a.kind - b.kind || a.idx - b.idx);
    const lastStep = Math.max(
      0,
      ...occ.map((o) => o.step),
      ...runSteps.map((s) => (s ? Math.max(0, ...s) : 0)),
    );

    const alive = new Float64Array(n).fill(1);
    const fire = new Float64Array(n);
    const total = new Float64Array(n);
    const flows: CashFlowColumn[] = [];
    const exercise: ExerciseColumn[] = [];
    const spread = compiled.fundingSpread;
    const notional = compiled.notional;

    /** Discounted, converted cash of one payment per path into `out` (masked by `mask`). */
    const payInto = (
      pay: CompiledPayment,
      amount: Float64Array,
      mask: Float64Array,
      k: number,
      t: number,
      out: Float64Array,
    ): void => {
      const disc = batch.discount;
      const fs = exp(-spread * t) * notional;
      const conv = pay.conversion;
      const scale = conv !== null && conv.kind === 'quanto' ? conv.rate * fs : fs;
      const dv = conv !== null && conv.kind === 'compo' ? domesticValue(pay.currency) : null;
      let bad = -1;
      for (let p = 0; p < n; p++) {
        if (mask[p] === 0) {
          out[p] = 0;
          continue;
        }
        const a = amount[p]!;
        if (!Number.isFinite(a)) bad = p;
        out[p] = a * (dv ? dv(k, p) : 1) * disc[k * n + p]! * scale;
      }
      if (bad >= 0)
        fail(
          'E_PAYOFF_NOT_FINITE',
          pay.amount.field,
          `must give a finite amount on every path where it pays (t = ${t.toFixed(4)} years, path ${bad})`,
          amount[bad],
          'guard divisions and logarithms, e.g. x > 0 ? log(x) : 0',
        );
    };

    let oi = 0;
    const cash = new Float64Array(n);
    const setScratch = new Map(events.map((ev, i) => [i, ev.set.map(() => new Float64Array(n))]));
    for (let k = 0; k <= lastStep && k < K; k++) {
      for (let r = 0; r < compiled.running.length; r++) {
        const steps = runSteps[r];
        if (steps !== null && !steps.has(k)) continue;
        const spec = compiled.running[r]!;
        env.k = k;
        const lv = runLevels[r]!(env, [], scratch);
        const acc = env.running[r]!;
        const c = runCount[r]!;
        if (c === 0) acc.set(lv);
        else if (spec.fn === 'min') for (let p = 0; p < n; p++) acc[p] = lv[p]! < acc[p]! ? lv[p]! : acc[p]!;
        else if (spec.fn === 'max') for (let p = 0; p < n; p++) acc[p] = lv[p]! > acc[p]! ? lv[p]! : acc[p]!;
        else for (let p = 0; p < n; p++) acc[p] = acc[p]! + (lv[p]! - acc[p]!) / (c + 1);
        runCount[r] = c + 1;
      }
      while (oi < occ.length && occ[oi]!.step === k) {
        const o = occ[oi++]!;
        const owner = o.kind === 0 ? compiled.events[o.idx]! : compiled.exercise[o.idx]!;
        const sched = owner.times;
        env.k = k;
        env.t = o.time;
        // a deal under way: the first remaining period began at a past date, and index/count include past dates
        env.dt =
          o.dateIdx === 0 && owner.firstAccrual !== undefined
            ? owner.firstAccrual
            : o.time - (o.dateIdx === 0 ? (owner.startTime ?? 0) : sched[o.dateIdx - 1]!);
        env.index = o.dateIdx + 1 + (owner.pastDates ?? 0);
        env.count = sched.length + (owner.pastDates ?? 0);
        if (o.kind === 0) {
          const ev = events[o.idx]!;
          let mask = alive;
          if (ev.when) {
            const c = ev.when.run(env);
            for (let p = 0; p < n; p++) fire[p] = alive[p] !== 0 && c[p] !== 0 ? 1 : 0;
            mask = fire;
          }
          if (ev.pay.length > 0) {
            const col = detailed ? new Float64Array(n) : null;
            for (const { p: pay, r } of ev.pay) {
              payInto(pay, r.run(env), mask, k, o.time, cash);
              for (let p = 0; p < n; p++) total[p]! += cash[p]!;
              if (col) for (let p = 0; p < n; p++) col[p]! += cash[p]!;
            }
            if (col) flows.push({ time: o.time, event: ev.e.label, values: col });
          }
          if (ev.set.length > 0) {
            // all updates read the state as it was before the event: compute every value, then assign
            // (a value is copied only when it is a state array itself, the one case an assignment could overwrite)
            const scratch = setScratch.get(o.idx)!;
            const next = ev.set.map(({ r }, j) => {
              const v = r.run(env);
              if (r.program.nodes[r.program.nodes.length - 1]!.op !== 'state') return v;
              scratch[j]!.set(v.subarray(0, n));
              return scratch[j]!;
            });
            ev.set.forEach(({ name }, j) => {
              const s = env.state.get(name)!;
              const v = next[j]!;
              for (let p = 0; p < n; p++) if (mask[p] !== 0) s[p] = v[p]!;
            });
          }
          if (ev.e.terminate) for (let p = 0; p < n; p++) if (mask[p] !== 0) alive[p] = 0;
        } else if (detailed) {
          const x = exercises[o.idx]!;
          const value = new Float64Array(n);
          payInto(x.x.amount, x.r.run(env), alive, k, o.time, value);
          const features: Record<string, Float64Array> = {};
          for (const e of compiled.equities) {
            const pn = names.get(e.id)!;
            const s = batch.equity[pn];
            if (s) features[`eq:${pn}`] = s.slice(k * n, (k + 1) * n);
            const v = batch.variance[pn];
            if (v) features[`var:${pn}`] = v.slice(k * n, (k + 1) * n);
          }
          for (const [ccy, s] of Object.entries(batch.shortRate))
            features[`rate:${ccy}`] = s.slice(k * n, (k + 1) * n);
          for (const f of compiled.fx)
            features[`fx:${f.per}/${f.units}`] = Float64Array.from(fxAt(f.units, f.per, k));
          for (const [name, s] of env.state) features[`state:${name}`] = Float64Array.from(s);
          exercise.push({
            label: x.x.label,
            by: x.x.by,
            time: o.time,
            step: k,
            value,
            alive: Float64Array.from(alive),
            features,
          });
        }
      }
    }
    return { nPaths: n, total, flows, exercise };
  }
  return {
    evaluate: (batch: PathBatch): Float64Array => run(batch, false).total,
    detailed: (batch: PathBatch): DetailedEvaluation => run(batch, true),
  };
}

/** A PathEvaluator for the simulation runner: per-path present value (domestic, discounted to 0), exercise rights ignored. */
export function makeDealEvaluator(compiled: CompiledDeal, opts: DealEvaluatorOptions = {}): PathEvaluator {
  return makeDealRunner(compiled, opts).evaluate;
}

/** Per-path discounted flows by event date, exercise values and regression features, for early-exercise methods. */
export function evaluateDetailed(
  compiled: CompiledDeal,
  batch: PathBatch,
  opts: DealEvaluatorOptions = {},
): DetailedEvaluation {
  return makeDealRunner(compiled, opts).detailed(batch);
}
