/**
 * The hybrid path generator: one variant, one batch of paths, driven by a shared block of independent normals.
 *
 * Schemes (each selectable, each cited where it is implemented):
 * - Black–Scholes with piecewise-constant vol: exact log steps, ln S' = ln S + ∫r − q h − ½∫σ² + √(∫σ²) Z.
 * - Heston: QE with martingale correction (Andersen 2008, default, ψc = 1.5) or full-truncation Euler
 *   (Lord, Koekkoek & van Dijk 2010), `hestonScheme: 'euler'`.
 * - Local volatility (Dupire): log-Euler with σ(t_k, S_k).
 * - Hull–White 1F per currency: x(t), ∫x and the Brownian increment drawn exactly as a joint Gaussian per step
 *   (hullWhiteTerms.ts); bank-account numeraire B(t) = exp(∫r) with ∫φ exact, so E[1/B(T)] = P(0,T).
 * - FX lognormal, d ln X = (r_d − r_f − ½σ_X²) dt + σ_X dW_X, with the step's integrated rates of both currencies.
 * - Quanto: an equity in a foreign currency gets −ρ(S,X) σ_S σ_X in its drift under the domestic measure; a foreign
 *   Hull–White rate gets −ρ(r_f,X) σ_f σ_X in the drift of x_f (Brigo & Mercurio 2006, Sec. 2.10 on the change of
 *   numeraire between currencies; common practice).
 *
 * Every equity, FX and discount step uses the same integrated short rate ∫_t^{t+h} r of its currency, drawn jointly
 * with the Gaussian increments, so E[S(T)/B(T)] = S0 e^{−qT} holds step by step for Black–Scholes, and for Heston-QE
 * (any ρ(S,r)) with the martingale correction of Andersen (2008), Sec. 7.2: the ∫r in the equity's log step and in
 * the discount cancel pathwise, and the equity residual R = W_S − ρ W_v is Gaussian and independent of the variance
 * draw (ρ(v,r) = 0), so the correction that makes E[exp(K0* + K1 V + K2 V' + √(∫v) R) | V] = 1 is Andersen's own.
 * Equation and section numbers of Andersen (2008) cited below are from memory (not re-checked against the paper).
 * Approximations: under Heston-QE the equity–rate covariance within a step uses the step's mean variance; between two
 * correlated Hull–White rates the within-step residuals of ∫x (beyond their Brownian increments) are independent.
 */
import type { DiscountCurve } from '../market/types.ts';
import type { EquitySpec, PathBatch, SimulationStart, VariantSpec } from './types.ts';
import {
  EngineError,
  fail,
  issue,
  requireCorrelation,
  requireFinite,
  requireNonNegative,
  requirePositive,
  type FieldIssue,
} from '../errors.ts';
import { normCdf } from '../math/index.ts';
import type { TimeGrid } from './timeGrid.ts';
import type { DriverLayout } from './drivers.ts';
import { orderDrivers, variantDriverNames } from './drivers.ts';
import { choleskyLower, variantCorrelation } from './correlationFactor.ts';
import { makeCurve as marketCurve } from '../market/curve.ts';
import { hwB, hwIntegrals, hwStepFactor, makeHullWhiteTerms, type HullWhiteTerms } from './hullWhiteTerms.ts';
import { makeGridLocalVol, type LocalVolFunction } from './localVol.ts';
import { exp, log } from '../math/detMath.ts';

/** Andersen's (2008) switching level ψc between the quadratic and exponential branches. */
const QE_PSI_C = 1.5;

/** Options for preparing a variant. */
export interface PrepareOptions {
  /** Replaces the grid local vol of the named equities (in-process use; functions cannot cross workers). */
  localVol?: Record<string, LocalVolFunction>;
  /** Builds the discount curve of a currency; default the market layer's makeCurve. */
  makeCurve?: (spec: VariantSpec['rates'][string]['curve'], field: string) => DiscountCurve;
}

/** A variant validated and pre-computed on a grid, ready to simulate batches. */
export interface PreparedVariant {
  readonly variant: VariantSpec;
  readonly grid: TimeGrid;
  /** Active drivers in the shared order. */
  readonly drivers: readonly string[];
  /** Warnings found while preparing (e.g. a Heston parameter set that violates the Feller condition). */
  readonly warnings: readonly FieldIssue[];
  /**
   * Simulates `nPaths` paths from `normals` (layout [step][slot][path], as {@link normalsBlockSize}). With `start`,
   * every new path continues path `start.path` of `start.from` from grid step `start.step`: the grid points up to it
   * are copied from that path and `normals` holds only the steps from `start.step` on (length
   * {@link normalsBlockSize} with `fromStep`; step k at offset (k − start.step) · width · nPaths).
   */
  simulate(normals: Float64Array, nPaths: number, start?: SimulationStart): PathBatch;
}

/** Length of the normals block of a batch: steps (from grid step `fromStep` on, default 0) × layout width × paths. */
export function normalsBlockSize(grid: TimeGrid, layout: DriverLayout, nPaths: number, fromStep = 0): number {
  return (grid.times.length - 1 - fromStep) * layout.width * nPaths;
}

/** Times where a model parameter of the variants changes (to be put on the grid). */
export function modelBreakTimes(variants: readonly VariantSpec[]): number[] {
  const out: number[] = [];
  for (const v of variants) {
    for (const e of v.equities) if (e.dynamics.kind === 'bs') out.push(...e.dynamics.volTimes);
    for (const c of Object.keys(v.rates)) {
      const hw = v.rates[c]!.hw;
      if (hw && Array.isArray(hw.sigma)) out.push(...(hw.sigmaTimes ?? []));
    }
  }
  return out;
}

interface RateState {
  ccy: string;
  curve: DiscountCurve;
  hw?: HullWhiteTerms;
  /** Per step: deterministic part of ∫r (∫φ for HW, −ln P ratio for a curve). */
  intPhi: Float64Array;
  /** Per grid point: φ(t_k) (HW) or f(0, t_k). */
  phi: Float64Array;
  decay?: Float64Array;
  bStep?: Float64Array;
  factor?: Float64Array[];
  muX?: Float64Array;
  muI?: Float64Array;
  slot: number;
  wIndex: number;
}

/** Integral of σ(u)² over [t0, t1] for piecewise-constant vols (`vols[i]` on (volTimes[i−1], volTimes[i]], flat after). */
function bsIntegral(volTimes: number[], vols: number[], t0: number, t1: number, power: 1 | 2): number {
  let s = 0;
  let lo = t0;
  for (let i = 0; i < vols.length && lo < t1; i++) {
    const end = i === vols.length - 1 ? Infinity : volTimes[i]!;
    if (end <= lo) continue;
    const hi = Math.min(end, t1);
    s += (power === 2 ? vols[i]! * vols[i]! : vols[i]!) * (hi - lo);
    lo = hi;
  }
  return s;
}

function validateEquity(e: EquitySpec, f: string, warnings: FieldIssue[]): void {
  if (typeof e.name !== 'string' || e.name === '')
    fail('E_NAME', `${f}.name`, 'must be a non-empty name', e.name);
  requirePositive(`${f}.spot`, e.spot);
  requireFinite(`${f}.divYield`, e.divYield);
  const d = e.dynamics;
  if (d.kind === 'bs') {
    if (!Array.isArray(d.vols) || d.vols.length === 0)
      fail('E_NO_VOLS', `${f}.dynamics.vols`, 'must list at least one vol', d.vols);
    if (!Array.isArray(d.volTimes) || d.volTimes.length !== d.vols.length)
      fail(
        'E_LENGTH',
        `${f}.dynamics.volTimes`,
        `must have ${d.vols.length} entries (one per vol)`,
        d.volTimes,
      );
    d.vols.forEach((v, i) => requireNonNegative(`${f}.dynamics.vols[${i}]`, v));
    d.volTimes.forEach((t, i) => {
      requirePositive(`${f}.dynamics.volTimes[${i}]`, t);
      if (i > 0 && !(t > d.volTimes[i - 1]!))
        fail('E_NOT_INCREASING', `${f}.dynamics.volTimes[${i}]`, 'must increase', t);
    });
  } else if (d.kind === 'heston') {
    requireNonNegative(`${f}.dynamics.v0`, d.v0);
    requirePositive(`${f}.dynamics.kappa`, d.kappa);
    requirePositive(`${f}.dynamics.theta`, d.theta);
    requirePositive(`${f}.dynamics.sigma`, d.sigma);
    requireCorrelation(`${f}.dynamics.rho`, d.rho);
    if (2 * d.kappa * d.theta < d.sigma * d.sigma)
      warnings.push(
        issue(
          'W_FELLER',
          `${f}.dynamics`,
          'violates the Feller condition 2 kappa theta >= sigma^2 (the variance can reach 0; allowed)',
          { kappa: d.kappa, theta: d.theta, sigma: d.sigma },
          undefined,
          'warning',
        ),
      );
  } else if (d.kind !== 'localvol') {
    fail(
      'E_DYNAMICS',
      `${f}.dynamics.kind`,
      'must be "bs", "heston" or "localvol"',
      (d as { kind: unknown }).kind,
    );
  }
}

/**
 * Validates a variant and pre-computes its step constants on the grid. Errors name the field; a Feller violation is
 * a warning. `layout` is the run's shared driver layout (it must contain this variant's drivers).
 */
export function prepareVariant(
  variant: VariantSpec,
  grid: TimeGrid,
  layout: DriverLayout,
  options: PrepareOptions = {},
): PreparedVariant {
  const v = variant;
  const warnings: FieldIssue[] = [];
  const scheme = v.hestonScheme ?? 'qe';
  if (scheme !== 'qe' && scheme !== 'euler')
    fail('E_SCHEME', `variants[${v.id}].hestonScheme`, 'must be "qe" or "euler"', scheme);
  if (!v.rates || !v.rates[v.domestic])
    fail(
      'E_NO_DOMESTIC_RATE',
      `variants[${v.id}].rates`,
      `must contain the domestic currency ${v.domestic}`,
      Object.keys(v.rates ?? {}),
    );
  const times = grid.times;
  const nSteps = times.length - 1;
  const makeCurve = options.makeCurve ?? marketCurve;

  const drivers = orderDrivers(variantDriverNames(v), layout);
  const corr = variantCorrelation(v, drivers);
  const L = choleskyLower(corr, drivers, `variants[${v.id}].correlation`);
  const m = drivers.length;
  const corrOf = (a: string, b: string): number => {
    const i = drivers.indexOf(a);
    const j = drivers.indexOf(b);
    if (i >= 0 && j >= 0) return corr[i]![j]!;
    const ni = v.correlation.names.indexOf(a);
    const nj = v.correlation.names.indexOf(b);
    return ni >= 0 && nj >= 0 ? (v.correlation.matrix[ni]?.[nj] ?? 0) : 0;
  };

  // FX by foreign currency.
  const fxByForeign = new Map<string, number>();
  v.fx.forEach((x, i) => {
    const f = `variants[${v.id}].fx[${i}]`;
    requirePositive(`${f}.spot`, x.spot);
    requireNonNegative(`${f}.vol`, x.vol);
    if (x.foreign === v.domestic)
      fail(
        'E_FX_CURRENCY',
        `${f}.foreign`,
        `must differ from the domestic currency ${v.domestic}`,
        x.foreign,
      );
    if (!v.rates[x.foreign])
      fail(
        'E_NO_RATE',
        `variants[${v.id}].rates`,
        `must contain the foreign currency ${x.foreign} of ${x.name}`,
        Object.keys(v.rates),
      );
    if (fxByForeign.has(x.foreign))
      fail('E_FX_DUPLICATE', `${f}.foreign`, "must not repeat another FX rate's foreign currency", x.foreign);
    fxByForeign.set(x.foreign, i);
  });

  // Rates.
  const rateStates = new Map<string, RateState>();
  for (const ccy of Object.keys(v.rates)) {
    const spec = v.rates[ccy]!;
    const f = `variants[${v.id}].rates.${ccy}`;
    const curve = makeCurve(spec.curve, `${f}.curve`);
    const lnP = Float64Array.from(times, (t) => log(curve.df(t)));
    const intPhi = new Float64Array(nSteps);
    const phi = new Float64Array(nSteps + 1);
    const rs: RateState = { ccy, curve, intPhi, phi, slot: -1, wIndex: -1 };
    if (!spec.hw) {
      for (let k = 0; k < nSteps; k++) intPhi[k] = lnP[k]! - lnP[k + 1]!;
      for (let k = 0; k <= nSteps; k++) phi[k] = curve.instFwd(times[k]!);
    } else {
      const hw = makeHullWhiteTerms(spec.hw, `${f}.hw`);
      rs.hw = hw;
      rs.slot = layout.slotOf(`rate:${ccy}`);
      rs.wIndex = drivers.indexOf(`rate:${ccy}`);
      rs.decay = new Float64Array(nSteps);
      rs.bStep = new Float64Array(nSteps);
      rs.muX = new Float64Array(nSteps);
      rs.muI = new Float64Array(nSteps);
      rs.factor = [];
      const V0 = Float64Array.from(times, (t) => hw.V(0, t));
      // Quanto drift of a foreign short rate under the domestic measure: −ρ(r_f, X) σ_f σ_X.
      const fxi = fxByForeign.get(ccy);
      const qc = fxi === undefined ? 0 : corrOf(`rate:${ccy}`, `fx:${v.fx[fxi]!.name}`) * v.fx[fxi]!.vol;
      for (let k = 0; k < nSteps; k++) {
        const h = times[k + 1]! - times[k]!;
        const sig = hw.sigmaAt(0.5 * (times[k]! + times[k + 1]!));
        // ∫_{t_k}^{t_{k+1}} φ = −ln(P(0,t_{k+1})/P(0,t_k)) + ½ (V(0,t_{k+1}) − V(0,t_k)) (Brigo & Mercurio, Sec. 3.3).
        intPhi[k] = lnP[k]! - lnP[k + 1]! + 0.5 * (V0[k + 1]! - V0[k]!);
        rs.decay[k] = exp(-hw.a * h);
        rs.bStep[k] = hwB(hw.a, h);
        rs.factor.push(hwStepFactor(hw.a, sig, h));
        const c = qc * sig;
        rs.muX[k] = -c * hwB(hw.a, h);
        rs.muI[k] = -c * hwIntegrals(hw.a, h).intB;
      }
      for (let k = 0; k <= nSteps; k++) phi[k] = curve.instFwd(times[k]!) + 0.5 * hw.dV0(times[k]!);
    }
    rateStates.set(ccy, rs);
  }

  // Equities.
  interface EqState {
    e: EquitySpec;
    slot: number;
    w: number;
    wv: number;
    rate: RateState;
    quantoCorr: number;
    quantoVol: number;
    /** corr(var, FX) of a foreign Heston equity: its variance drift changes with the measure too. */
    varQuantoCorr: number;
    intVar?: Float64Array;
    intVol?: Float64Array;
    lv?: LocalVolFunction;
  }
  const eqs: EqState[] = v.equities.map((e, i) => {
    const f = `variants[${v.id}].equities[${i}]`;
    validateEquity(e, f, warnings);
    const rate = rateStates.get(e.currency);
    if (!rate)
      fail(
        'E_NO_RATE',
        `variants[${v.id}].rates`,
        `must contain the currency ${e.currency} of ${e.name}`,
        Object.keys(v.rates),
      );
    let quantoCorr = 0;
    let quantoVol = 0;
    let varQuantoCorr = 0;
    if (e.currency !== v.domestic) {
      const fxi = fxByForeign.get(e.currency);
      if (fxi === undefined)
        fail(
          'E_NO_FX',
          `variants[${v.id}].fx`,
          `must contain an FX rate ${e.currency}->${v.domestic} for the foreign equity ${e.name}`,
          v.fx.map((x) => x.name),
        );
      quantoCorr = corrOf(`eq:${e.name}`, `fx:${v.fx[fxi]!.name}`);
      quantoVol = v.fx[fxi]!.vol;
      if (e.dynamics.kind === 'heston') varQuantoCorr = corrOf(`var:${e.name}`, `fx:${v.fx[fxi]!.name}`);
    }
    const st: EqState = {
      e,
      slot: layout.slotOf(`eq:${e.name}`),
      w: drivers.indexOf(`eq:${e.name}`),
      wv: drivers.indexOf(`var:${e.name}`),
      rate,
      quantoCorr,
      quantoVol,
      varQuantoCorr,
    };
    const d = e.dynamics;
    if (d.kind === 'bs') {
      st.intVar = new Float64Array(nSteps);
      st.intVol = new Float64Array(nSteps);
      for (let k = 0; k < nSteps; k++) {
        st.intVar[k] = bsIntegral(d.volTimes, d.vols, times[k]!, times[k + 1]!, 2);
        st.intVol[k] = bsIntegral(d.volTimes, d.vols, times[k]!, times[k + 1]!, 1);
      }
    } else if (d.kind === 'localvol') {
      const given = options.localVol?.[e.name];
      const lnS0 = log(e.spot);
      // Deterministic forward for the moneyness coordinate: F(t) = S0 P_q(t) / P(0,t) with the currency's curve.
      st.lv =
        given ?? makeGridLocalVol(d, (t) => exp(lnS0 - e.divYield * t) / rate.curve.df(t), `${f}.dynamics`);
    }
    return st;
  });

  const fxStates = v.fx.map((x) => ({
    x,
    w: drivers.indexOf(`fx:${x.name}`),
    dom: rateStates.get(v.domestic)!,
    fgn: rateStates.get(x.foreign)!,
  }));
  const domesticRate = rateStates.get(v.domestic)!;
  const slots = drivers.map((d) => layout.slotOf(d));
  const width = layout.width;

  /** Validates a start option against this variant and grid; returns the start step. */
  const checkStart = (start: SimulationStart): number => {
    const { from, path, step } = start;
    if (!(Number.isInteger(step) && step >= 0 && step <= nSteps))
      fail('E_BAD_STEP_INDEX', 'start.step', `must be a grid index 0..${nSteps}`, step);
    if (!(Number.isInteger(path) && path >= 0 && path < from.nPaths))
      fail('E_BAD_PATH_INDEX', 'start.path', `must be a path index 0..${from.nPaths - 1}`, path);
    if (from.times.length !== times.length || from.times.some((t, k) => t !== times[k]))
      fail(
        'E_START_GRID',
        'start.from.times',
        'must be the grid of this prepared variant',
        from.times.length,
        'continue a batch simulated by the same prepared variant',
      );
    const missing = [
      ...eqs.filter((s) => !from.equity[s.e.name]).map((s) => `equity.${s.e.name}`),
      ...eqs
        .filter((s) => s.e.dynamics.kind === 'heston' && !from.variance[s.e.name])
        .map((s) => `variance.${s.e.name}`),
      ...fxStates.filter((f) => !from.fx[f.x.name]).map((f) => `fx.${f.x.name}`),
      ...[...rateStates.keys()].filter((c) => !from.shortRate[c]).map((c) => `shortRate.${c}`),
    ];
    if (missing.length > 0)
      fail(
        'E_START_STATE',
        'start.from',
        'must hold every state of this variant',
        missing,
        'continue a batch simulated by the same prepared variant',
      );
    return step;
  };

  const simulate = (normals: Float64Array, n: number, start?: SimulationStart): PathBatch => {
    if (!Number.isInteger(n) || n <= 0) fail('E_BAD_PATHS', 'nPaths', 'must be a whole number > 0', n);
    const k0 = start ? checkStart(start) : 0;
    const expected = (nSteps - k0) * width * n;
    if (normals.length < expected)
      throw new EngineError('E_INTERNAL', `normals block too short: ${normals.length} < ${expected}`);
    const size = (nSteps + 1) * n;
    const W = new Float64Array(m * n);
    const equity: Record<string, Float64Array> = {};
    const variance: Record<string, Float64Array> = {};
    const fxOut: Record<string, Float64Array> = {};
    const shortRate: Record<string, Float64Array> = {};
    const discount = new Float64Array(size);
    // Per-currency scratch: the step's integrated short rate on each path, and the current x.
    const stepR = new Map<string, Float64Array>();
    const xNow = new Map<string, Float64Array>();
    for (const [ccy, rs] of rateStates) {
      const arr = new Float64Array(size);
      shortRate[ccy] = arr;
      for (let p = 0; p < n; p++) arr[p] = rs.phi[0]!;
      stepR.set(ccy, new Float64Array(n));
      if (rs.hw) xNow.set(ccy, new Float64Array(n));
    }
    const lnS = eqs.map((s) => new Float64Array(n).fill(log(s.e.spot)));
    const vNow = eqs.map((s) =>
      s.e.dynamics.kind === 'heston' ? new Float64Array(n).fill(s.e.dynamics.v0) : null,
    );
    const lvScratch = eqs.map((s) => (s.lv ? new Float64Array(n) : null));
    const spotNow = eqs.map((s) => (s.lv ? new Float64Array(n).fill(s.e.spot) : null));
    eqs.forEach((s, i) => {
      const a = new Float64Array(size);
      a.fill(s.e.spot, 0, n);
      equity[s.e.name] = a;
      if (vNow[i]) {
        const va = new Float64Array(size);
        va.fill((s.e.dynamics as { v0: number }).v0, 0, n);
        variance[s.e.name] = va;
      }
    });
    const lnX = fxStates.map((f) => new Float64Array(n).fill(log(f.x.spot)));
    fxStates.forEach((f) => {
      const a = new Float64Array(size);
      a.fill(f.x.spot, 0, n);
      fxOut[f.x.name] = a;
    });
    const cumR = new Float64Array(n);
    discount.fill(1, 0, n);
    if (start) {
      // History: grid points 0 … k0 of the continued path, copied bit for bit.
      const { from, path } = start;
      const P = from.nPaths;
      const copy = (src: Float64Array, dst: Float64Array): void => {
        for (let k = 0; k <= k0; k++) dst.fill(src[k * P + path]!, k * n, (k + 1) * n);
      };
      for (const name of Object.keys(equity)) copy(from.equity[name]!, equity[name]!);
      for (const name of Object.keys(variance)) copy(from.variance[name]!, variance[name]!);
      for (const name of Object.keys(fxOut)) copy(from.fx[name]!, fxOut[name]!);
      for (const ccy of Object.keys(shortRate)) copy(from.shortRate[ccy]!, shortRate[ccy]!);
      copy(from.discount, discount);
      // Running state at t_{k0}, recovered from the stored outputs. Exact where the state is stored as it runs
      // (Heston-QE level and variance, local-vol level); elsewhere the recovery can differ from the running value
      // in the last bits: ln S = log(S) for Black–Scholes, Heston-Euler and local vol (S was stored as exp(ln S)),
      // ln X = log(X), x = r − φ(t_{k0}) for Hull–White (r was stored as x + φ), ∫r = −log(1/B) for the numeraire.
      // One recovery is coarser: full-truncation Euler keeps a running variance that may be negative while it stores
      // max(V, 0), so a continued path restarts from the stored, floored variance (it differs from the running one
      // only where that was below zero).
      const o = k0 * P + path;
      for (const [ccy, rs] of rateStates)
        if (rs.hw) xNow.get(ccy)!.fill(from.shortRate[ccy]![o]! - rs.phi[k0]!);
      eqs.forEach((s, i) => {
        const level = from.equity[s.e.name]![o]!;
        lnS[i]!.fill(log(level));
        vNow[i]?.fill(from.variance[s.e.name]![o]!);
        spotNow[i]?.fill(level);
      });
      fxStates.forEach((f, i) => lnX[i]!.fill(log(from.fx[f.x.name]![o]!)));
      cumR.fill(-log(from.discount[o]!));
    }

    for (let k = k0; k < nSteps; k++) {
      const t0 = times[k]!;
      const h = times[k + 1]! - t0;
      const sqh = Math.sqrt(h);
      const base = (k - k0) * width * n;
      const o0 = k * n;
      const o1 = (k + 1) * n;
      // 1. Correlated unit normals of the active drivers: W_i = Σ_{j≤i} L_ij Z_j.
      for (let i = 0; i < m; i++) {
        const wi = i * n;
        for (let p = 0; p < n; p++) W[wi + p] = 0;
        for (let j = 0; j <= i; j++) {
          const l = L[i * m + j]!;
          if (l === 0) continue;
          const zo = base + slots[j]! * n;
          for (let p = 0; p < n; p++) W[wi + p] += l * normals[zo + p]!;
        }
      }
      // 2. Short rates and the step's integrated rate per currency.
      for (const [ccy, rs] of rateStates) {
        const sr = stepR.get(ccy)!;
        const rOut = shortRate[ccy]!;
        if (!rs.hw) {
          sr.fill(rs.intPhi[k]!);
          rOut.fill(rs.phi[k + 1]!, o1, o1 + n);
          continue;
        }
        const x = xNow.get(ccy)!;
        const F = rs.factor![k]!;
        const l10 = F[1]!,
          l11 = F[2]!,
          l20 = F[3]!,
          l21 = F[4]!,
          l22 = F[5]!;
        const e = rs.decay![k]!,
          b = rs.bStep![k]!,
          mx = rs.muX![k]!,
          mi = rs.muI![k]!,
          ip = rs.intPhi[k]!,
          ph = rs.phi[k + 1]!;
        const wo = rs.wIndex * n;
        const a1 = base + (rs.slot + 1) * n;
        const a2 = base + (rs.slot + 2) * n;
        for (let p = 0; p < n; p++) {
          const z = W[wo + p]!;
          const u1 = normals[a1 + p]!;
          const u2 = normals[a2 + p]!;
          const xp = x[p]!;
          // ∫x over the step = B(h) x(t) + ε_I; x(t+h) = e^{−ah} x(t) + ε_x (exact joint Gaussian).
          sr[p] = ip + b * xp + l20 * z + l21 * u1 + l22 * u2 + mi;
          const xn = e * xp + l10 * z + l11 * u1 + mx;
          x[p] = xn;
          rOut[o1 + p] = xn + ph;
        }
      }
      // 3. Equities (and their variances).
      for (let i = 0; i < eqs.length; i++) {
        const s = eqs[i]!;
        const out = equity[s.e.name]!;
        const ls = lnS[i]!;
        const sr = stepR.get(s.e.currency)!;
        const q = s.e.divYield * h;
        const wo = s.w * n;
        const d = s.e.dynamics;
        if (d.kind === 'bs') {
          const iv = s.intVar![k]!;
          const sd = Math.sqrt(iv);
          // Quanto drift −ρ σ_S σ_X over the step: −ρ σ_X ∫σ_S.
          const drift = -q - 0.5 * iv - s.quantoCorr * s.quantoVol * s.intVol![k]!;
          for (let p = 0; p < n; p++) {
            const y = ls[p]! + sr[p]! + drift + sd * W[wo + p]!;
            ls[p] = y;
            out[o1 + p] = exp(y);
          }
        } else if (d.kind === 'heston') {
          const vv = vNow[i]!;
          const vOut = variance[s.e.name]!;
          const wv = s.wv * n;
          const { kappa, theta, sigma, rho } = d;
          const qx = s.quantoCorr * s.quantoVol;
          // Change of measure of the variance of a foreign equity (Girsanov, the same shift that gives the equity
          // its quanto drift; Brigo & Mercurio 2006, Sec. 2.10, section number from memory):
          // dv = [κ(θ − v) − ρ(v,X) σ σ_X √v] dt + σ √v dW_v under the domestic measure.
          const vqx = s.varQuantoCorr * s.quantoVol * sigma;
          const ekm = vqx === 0 ? 0 : (1 - exp(-kappa * h)) / kappa;
          if (scheme === 'qe') {
            // Andersen (2008), Sec. 3.2.3–3.2.4: moments of V(t+h) | V(t), eqs. (17)–(18).
            const ek = exp(-kappa * h);
            const c1 = (sigma * sigma * ek * (1 - ek)) / kappa;
            const c2 = (theta * sigma * sigma * (1 - ek) * (1 - ek)) / (2 * kappa);
            // Andersen (2008), eq. (33) with γ1 = γ2 = ½: ln S' = ln S + K0 + K1 V + K2 V' + √(K3 V + K4 V') Z.
            const g1 = 0.5,
              g2 = 0.5;
            const K0 = (-rho * kappa * theta * h) / sigma;
            const K1 = g1 * h * ((kappa * rho) / sigma - 0.5) - rho / sigma;
            const K2 = g2 * h * ((kappa * rho) / sigma - 0.5) + rho / sigma;
            const K3 = g1 * h * (1 - rho * rho);
            const K4 = g2 * h * (1 - rho * rho);
            // Martingale correction, Andersen (2008), Sec. 7.2, eqs. (49)–(50): A = K2 + ½ K4.
            const A = K2 + 0.5 * K4;
            const K13 = K1 + 0.5 * K3;
            const invA2 = A > 0 ? 1 / (2 * A) : Infinity;
            const quantoVar = vqx !== 0;
            for (let p = 0; p < n; p++) {
              const V = vv[p]!;
              const zv = W[wv + p]!;
              // Extra drift −ρ(v,X) σ σ_X √v frozen at the step's start and carried by e^{−κ(h−s)} (an
              // approximation of the conditional mean, exact as h → 0; zero for a domestic equity or ρ(v,X) = 0).
              const m0 = quantoVar
                ? theta + (V - theta) * ek - vqx * Math.sqrt(V) * ekm
                : theta + (V - theta) * ek;
              const mean = m0 > 1e-300 ? m0 : 1e-300;
              const s2 = V * c1 + c2;
              const psi = s2 / (mean * mean);
              let Vn: number;
              // The martingale correction enters as e^{k0}·scale: the logarithms in Andersen's eqs. (49)–(50) are
              // applied as factors (√d and 1/(p + β(1−p)/(β−A))), so the step needs no log (same value, fewer calls).
              let k0 = K0;
              let scale = 1;
              if (psi <= QE_PSI_C) {
                // Quadratic branch, eqs. (27)–(28): V' = a (b + Z_v)².
                const ip = 2 / psi;
                const b2 = ip - 1 + Math.sqrt(ip * (ip - 1));
                const a = mean / (1 + b2);
                const bz = Math.sqrt(b2) + zv;
                Vn = a * bz * bz;
                if (a < invA2) {
                  const d = 1 - 2 * A * a;
                  k0 = (-A * b2 * a) / d - K13 * V;
                  scale = Math.sqrt(d);
                }
              } else {
                // Exponential branch, eqs. (29)–(30): P(V' = 0) = p, else exponential with rate β.
                const pp = (psi - 1) / (psi + 1);
                const beta = (1 - pp) / mean;
                const u = normCdf(zv);
                Vn = u <= pp ? 0 : log((1 - pp) / (1 - u)) / beta;
                if (A < beta) {
                  k0 = -K13 * V;
                  scale = 1 / (pp + (beta * (1 - pp)) / (beta - A));
                }
              }
              const iv = h * (g1 * V + g2 * Vn);
              const siv = Math.sqrt(iv);
              // Residual of the equity driver given its own variance driver: R = W_S − ρ W_v ~ N(0, 1 − ρ²).
              const R = W[wo + p]! - rho * zv;
              // Quanto drift −ρ(S,X) σ_X ∫√v dt ≈ −ρ σ_X √(h ∫v) (zero for a domestic equity).
              // The variance's extra drift needs no term here: K0 is replaced by the martingale correction k0,
              // computed from the QE law of V' with the shifted mean, so E[S'/S] stays exact.
              // The state is S itself, not ln S, so the correction's factor multiplies in: S' = S e^{y} scale.
              const y = sr[p]! - q + k0 + K1 * V + K2 * Vn + siv * R - qx * sqh * siv;
              out[o1 + p] = out[o0 + p]! * exp(y) * scale;
              vv[p] = Vn;
              vOut[o1 + p] = Vn;
            }
          } else {
            // Full truncation Euler, Lord, Koekkoek & van Dijk (2010), Sec. 3 (scheme "FT"):
            // v' = v + κ(θ − v⁺)h + σ √(v⁺ h) Z_v; ln S' = ln S + (r − q − ½ v⁺) h + √(v⁺ h) Z_S.
            for (let p = 0; p < n; p++) {
              const V = vv[p]!;
              const vp = V > 0 ? V : 0;
              const sv = Math.sqrt(vp * h);
              const y = ls[p]! + sr[p]! - q - 0.5 * vp * h + sv * W[wo + p]! - qx * Math.sqrt(vp) * h;
              ls[p] = y;
              out[o1 + p] = exp(y);
              const Vn = V + (kappa * (theta - vp) - vqx * Math.sqrt(vp)) * h + sigma * sv * W[wv + p]!;
              vv[p] = Vn;
              vOut[o1 + p] = Vn > 0 ? Vn : 0;
            }
          }
        } else {
          // Local vol, log-Euler: ln S' = ln S + ∫r − q h − ½ σ² h + σ √h Z, σ = σ_loc(t_k, S_k) (Dupire 1994).
          const sig = lvScratch[i]!;
          const sNow = spotNow[i]!;
          s.lv!(t0, sNow, sig);
          const qx = s.quantoCorr * s.quantoVol;
          for (let p = 0; p < n; p++) {
            const sg = sig[p]!;
            const y = ls[p]! + sr[p]! - q - 0.5 * sg * sg * h - qx * sg * h + sg * sqh * W[wo + p]!;
            ls[p] = y;
            const sv = exp(y);
            sNow[p] = sv;
            out[o1 + p] = sv;
          }
        }
      }
      // 4. FX: d ln X = (r_d − r_f − ½σ_X²) dt + σ_X dW_X with the step's integrated rates.
      for (let i = 0; i < fxStates.length; i++) {
        const f = fxStates[i]!;
        const lx = lnX[i]!;
        const out = fxOut[f.x.name]!;
        const rd = stepR.get(v.domestic)!;
        const rf = stepR.get(f.x.foreign)!;
        const sd = f.x.vol * sqh;
        const dr = -0.5 * f.x.vol * f.x.vol * h;
        const wo = f.w * n;
        for (let p = 0; p < n; p++) {
          const y = lx[p]! + rd[p]! - rf[p]! + dr + sd * W[wo + p]!;
          lx[p] = y;
          out[o1 + p] = exp(y);
        }
      }
      // 5. Domestic numeraire: 1/B(t_{k+1}) = exp(−∫_0^{t_{k+1}} r); with a deterministic rate every path has the
      // same sum, so the exp is taken once (the same value as per path).
      const rd = stepR.get(v.domestic)!;
      if (!domesticRate.hw) {
        const c = cumR[0]! + rd[0]!;
        cumR.fill(c);
        discount.fill(exp(-c), o1, o1 + n);
      } else {
        for (let p = 0; p < n; p++) {
          const c = cumR[p]! + rd[p]!;
          cumR[p] = c;
          discount[o1 + p] = exp(-c);
        }
      }
    }

    const bond = (ccy: string, k: number, T: number, out: Float64Array): void => {
      const rs = rateStates.get(ccy);
      if (!rs) fail('E_NO_RATE', 'bond.ccy', `must be one of ${[...rateStates.keys()].join(', ')}`, ccy);
      if (!(Number.isInteger(k) && k >= 0 && k <= nSteps))
        fail('E_BAD_STEP_INDEX', 'bond.k', `must be a grid index 0..${nSteps}`, k);
      const t = times[k]!;
      if (!(T >= t - 1e-12)) fail('E_BOND_MATURITY', 'bond.T', `must be >= the observation time ${t}`, T);
      const ratio = log(rs.curve.df(T)) - log(rs.curve.df(t));
      if (!rs.hw) {
        out.fill(exp(ratio), 0, n);
        return;
      }
      const hw = rs.hw;
      // P(t,T) = P(0,T)/P(0,t) exp(½[V(t,T) − V(0,T) + V(0,t)] − B(T − t) x(t)) (Brigo & Mercurio (4.14), one factor).
      const lnA = ratio + 0.5 * (hw.V(t, T) - hw.V(0, T) + hw.V(0, t));
      const B = hwB(hw.a, T - t);
      const r = shortRate[ccy]!;
      const ph = rs.phi[k]!;
      const o = k * n;
      for (let p = 0; p < n; p++) out[p] = exp(lnA - B * (r[o + p]! - ph));
    };
    return { nPaths: n, times, equity, variance, fx: fxOut, shortRate, discount, bond };
  };
  return { variant: v, grid, drivers, warnings, simulate };
}
