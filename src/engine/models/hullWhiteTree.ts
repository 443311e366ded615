/**
 * Hull–White one-factor trinomial tree fitted to a discount curve: the independent reference for Bermudan
 * swaptions priced by Longstaff–Schwartz.
 *
 * Construction: J. Hull, A. White (1994), 'Numerical procedures for implementing term structure models I:
 * single-factor models', J. Derivatives 2(1), 7–16.
 * - Stage 1 (the paper's first stage): a tree for x = r − α(t), dx = −a x dt + σ dW, x(0) = 0, with node spacing
 *   Δx = √(3V) where V is the variance of one step. Each node branches to the three nodes around its expected value
 *   E = x e^{−aΔt}: centre k = round(E/Δx'), offset η = (E − kΔx')/Δx', and the probabilities match the conditional
 *   mean and variance (V/Δx'² = 1/3):
 *     p_u = 1/6 + (η² + η)/2,   p_m = 2/3 − η²,   p_d = 1/6 + (η² − η)/2   (η in units of Δx').
 *   Rounding the centre to the nearest node replaces their switch to up/down branching
 *   at j_max ≈ 0.184/(aΔt): it also keeps every probability positive (|η| ≤ 1/2 gives p_m ≥ 5/12 and
 *   p_u, p_d ≥ 1/24) and the width stays bounded through mean reversion (about 1/(2aΔt) nodes each side).
 *   We use the exact Ornstein–Uhlenbeck moments E = x e^{−aΔt}, V = σ²(1 − e^{−2aΔt})/(2a) instead of their
 *   first-order M = −aΔt, V = σ²Δt, and allow unequal steps (Δx' of the next level is √(3V) of the step into it) so
 *   that every event date is a tree date; both are small generalisations of the paper's scheme.
 * - Stage 2 (the paper's second stage): forward induction of the Arrow–Debreu prices Q_{i,j}; α_i is chosen so the tree
 *   reprices the discount bond maturing at t_{i+1} exactly:
 *     α_i = ln( Σ_j Q_{i,j} e^{−jΔx_i Δt_i} / P(0, t_{i+1}) ) / Δt_i,
 *     Q_{i+1,k} = Σ_j Q_{i,j} p_{j→k} e^{−(α_i + jΔx_i)Δt_i}.
 * The rate at node (i, j) is the Δt_i-period continuously compounded rate r = α_i + jΔx_i.
 * Section and equation numbers cited in this file are given from memory.
 */
import { fail, requirePositive } from '../errors.ts';
import type { DiscountCurve } from '../market/types.ts';
import { exp, expm1, log } from '../math/detMath.ts';

/** The fitted tree as plain data (structured-cloneable). Level i has nodes j = −width[i] … width[i]. */
export interface HullWhiteTree {
  a: number;
  sigma: number;
  /** Tree dates t_0 = 0 < t_1 < … < t_N (years). */
  times: Float64Array;
  /** Half-width of each level: node count 2·width + 1. */
  width: Int32Array;
  /** Node spacing Δx_i of each level (rate). */
  dx: Float64Array;
  /** Drift shift α_i of each step i = 0 … N−1 (rate): r(i, j) = α_i + jΔx_i. */
  alpha: Float64Array;
  /** Per level i < N, per node (offset `nodeOffset[i] + j + width[i]`): centre node index k at level i+1 and the probabilities. */
  nodeOffset: Int32Array;
  centre: Int32Array;
  pu: Float64Array;
  pm: Float64Array;
  pd: Float64Array;
}

/** Settings of {@link buildHullWhiteTree}. */
export interface HullWhiteTreeSettings {
  /** Dates that must be tree dates (exercise, payment), years > 0. */
  eventTimes: number[];
  /** Largest step in years (default 1/100). */
  maxStep?: number;
  /** Multiply the step count of every gap by this integer (default 1); 2 halves every step exactly. */
  refine?: number;
}

/** Tree dates: the union of 0 and the event times, each gap cut into equal steps no longer than `maxStep`. */
function treeTimes(eventTimes: number[], maxStep: number, refine: number): number[] {
  const ev = [...new Set(eventTimes)].sort((x, y) => x - y);
  const out = [0];
  let prev = 0;
  for (const t of ev) {
    const n = Math.max(1, Math.ceil((t - prev) / maxStep - 1e-9)) * refine;
    for (let k = 1; k <= n; k++) out.push(k === n ? t : prev + ((t - prev) * k) / n);
    prev = t;
  }
  return out;
}

/**
 * Builds the Hull–White (1994) trinomial tree for `dr = (θ(t) − a r) dt + σ dW` fitted to `curve`.
 * @param params a (1/year, > 0) and constant σ (absolute, per √year, > 0).
 */
export function buildHullWhiteTree(
  curve: DiscountCurve,
  params: { a: number; sigma: number },
  settings: HullWhiteTreeSettings,
): HullWhiteTree {
  const a = requirePositive('hullWhiteTree.a', params.a, 'mean reversion per year, e.g. 0.05');
  const sigma = requirePositive('hullWhiteTree.sigma', params.sigma, 'absolute short-rate vol, e.g. 0.01');
  const maxStep = requirePositive('hullWhiteTree.maxStep', settings.maxStep ?? 0.01, 'e.g. 0.01 years');
  if (settings.eventTimes.length === 0)
    fail('E_TREE_TIMES', 'hullWhiteTree.eventTimes', 'must hold at least one date', settings.eventTimes);
  settings.eventTimes.forEach((t, i) => {
    if (!(Number.isFinite(t) && t > 0))
      fail('E_TREE_TIMES', `hullWhiteTree.eventTimes[${i}]`, 'must be a time in years > 0', t);
  });
  const refine = settings.refine ?? 1;
  if (!(Number.isInteger(refine) && refine >= 1))
    fail('E_TREE_REFINE', 'hullWhiteTree.refine', 'must be an integer ≥ 1', refine);
  const times = treeTimes(settings.eventTimes, maxStep, refine);
  const N = times.length - 1;
  const width = new Int32Array(N + 1);
  const dx = new Float64Array(N + 1);
  const alpha = new Float64Array(N);
  const nodeOffset = new Int32Array(N + 1);

  // Stage 1: geometry and branching, level by level.
  const centreL: number[] = [];
  const puL: number[] = [];
  const pmL: number[] = [];
  const pdL: number[] = [];
  width[0] = 0;
  dx[0] = 0;
  for (let i = 0; i < N; i++) {
    const h = times[i + 1]! - times[i]!;
    const decay = exp(-a * h);
    const v = (sigma * sigma * -expm1(-2 * a * h)) / (2 * a);
    const dxn = Math.sqrt(3 * v);
    dx[i + 1] = dxn;
    nodeOffset[i] = centreL.length;
    let w = 0;
    for (let j = -width[i]!; j <= width[i]!; j++) {
      const e = j * dx[i]! * decay;
      const k = Math.round(e / dxn);
      const eta = (e - k * dxn) / dxn;
      centreL.push(k);
      puL.push(1 / 6 + (eta * eta + eta) / 2);
      pmL.push(2 / 3 - eta * eta);
      pdL.push(1 / 6 + (eta * eta - eta) / 2);
      w = Math.max(w, Math.abs(k) + 1);
    }
    width[i + 1] = w;
  }
  nodeOffset[N] = centreL.length;

  // Stage 2: forward induction of Arrow–Debreu prices, α_i fitted to P(0, t_{i+1}) (Hull & White 1994, second stage).
  let q = new Float64Array(1).fill(1);
  for (let i = 0; i < N; i++) {
    const h = times[i + 1]! - times[i]!;
    const wi = width[i]!;
    let s = 0;
    for (let j = -wi; j <= wi; j++) s += q[j + wi]! * exp(-j * dx[i]! * h);
    const target = curve.df(times[i + 1]!);
    if (!(target > 0))
      fail('E_TREE_CURVE', 'hullWhiteTree.curve', 'must give positive discount factors', target);
    alpha[i] = log(s / target) / h;
    const wn = width[i + 1]!;
    const qn = new Float64Array(2 * wn + 1);
    for (let j = -wi; j <= wi; j++) {
      const n = nodeOffset[i]! + j + wi;
      const d = q[j + wi]! * exp(-(alpha[i]! + j * dx[i]!) * h);
      const k = centreL[n]! + wn;
      qn[k + 1] = qn[k + 1]! + d * puL[n]!;
      qn[k] = qn[k]! + d * pmL[n]!;
      qn[k - 1] = qn[k - 1]! + d * pdL[n]!;
    }
    q = qn;
  }
  return {
    a,
    sigma,
    times: Float64Array.from(times),
    width,
    dx,
    alpha,
    nodeOffset,
    centre: Int32Array.from(centreL),
    pu: Float64Array.from(puL),
    pm: Float64Array.from(pmL),
    pd: Float64Array.from(pdL),
  };
}

/** Index of time `t` among the tree dates; throws when `t` is not a tree date. */
export function treeIndex(tree: HullWhiteTree, t: number, field = 'time'): number {
  let best = -1;
  for (let i = 0; i < tree.times.length; i++)
    if (Math.abs(tree.times[i]! - t) <= 1e-10 * Math.max(1, t)) best = i;
  if (best < 0)
    fail(
      'E_TREE_TIMES',
      field,
      'must be a date of the tree',
      t,
      'add it to the tree’s eventTimes when building it',
    );
  return best;
}

/** One backward step: values at level i+1 → discounted expected values at level i. */
export function rollBack(tree: HullWhiteTree, i: number, next: Float64Array): Float64Array {
  const wi = tree.width[i]!;
  const wn = tree.width[i + 1]!;
  const h = tree.times[i + 1]! - tree.times[i]!;
  const out = new Float64Array(2 * wi + 1);
  for (let j = -wi; j <= wi; j++) {
    const n = tree.nodeOffset[i]! + j + wi;
    const k = tree.centre[n]! + wn;
    const ev = tree.pu[n]! * next[k + 1]! + tree.pm[n]! * next[k]! + tree.pd[n]! * next[k - 1]!;
    out[j + wi] = exp(-(tree.alpha[i]! + j * tree.dx[i]!) * h) * ev;
  }
  return out;
}

/** Price at time 0 of the zero-coupon bond paying 1 at tree date T, by backward induction. */
export function treeZeroBond(tree: HullWhiteTree, T: number): number {
  const iT = treeIndex(tree, T, 'zeroBond.T');
  let v: Float64Array = new Float64Array(2 * tree.width[iT]! + 1).fill(1);
  for (let i = iT - 1; i >= 0; i--) v = rollBack(tree, i, v);
  return v[0]!;
}

/**
 * Exercise step: the option becomes continuation + max(g, 0), with g = exercise value − continuation, averaged over
 * each node's cell with g linear across it (payoff smoothing; Heston & Zhou 2000, 'On the rate of convergence of
 * discrete-time contingent claims', Math. Finance 10(1): it removes the odd–even oscillation that a kink between
 * nodes causes, leaving a smooth first-order error). The cell average of max(u + s·y, 0), y ∈ [−½, ½], is u when
 * u ≥ |s|/2, 0 when u ≤ −|s|/2, and (u + |s|/2)² / (2|s|) otherwise.
 */
function addSmoothedGain(option: Float64Array, gain: Float64Array): void {
  const nn = gain.length;
  for (let j = 0; j < nn; j++) {
    const u = gain[j]!;
    const s =
      nn === 1
        ? 0
        : j === 0
          ? gain[1]! - u
          : j === nn - 1
            ? u - gain[j - 1]!
            : (gain[j + 1]! - gain[j - 1]!) / 2;
    const h = Math.abs(s) / 2;
    const avg = u >= h ? u : u <= -h ? 0 : ((u + h) * (u + h)) / (4 * h);
    option[j] = option[j]! + avg;
  }
}

/** A European or Bermudan option on a zero-coupon bond (face paid at `maturity`). */
export interface TreeBondOptionSpec {
  type: 'call' | 'put';
  /** Exercise dates (years), before the maturity. */
  exerciseTimes: number[];
  /** Bond maturity (years). */
  maturity: number;
  /** Cash strike per option (same units as `face`). */
  strike: number;
  /** Face of the bond (default 1). */
  face?: number;
}

/** Prices an option on a zero-coupon bond on the tree by backward induction (smoothed exercise). */
export function treeBondOption(tree: HullWhiteTree, spec: TreeBondOptionSpec): number {
  const face = spec.face ?? 1;
  const iT = treeIndex(tree, spec.maturity, 'bondOption.maturity');
  const exIdx = new Set(
    spec.exerciseTimes.map((t, i) => {
      const k = treeIndex(tree, t, `bondOption.exerciseTimes[${i}]`);
      if (k >= iT)
        fail('E_BOND_OPTION', `bondOption.exerciseTimes[${i}]`, 'must be before the bond maturity', t);
      return k;
    }),
  );
  const sign = spec.type === 'call' ? 1 : -1;
  let bond: Float64Array = new Float64Array(2 * tree.width[iT]! + 1).fill(face);
  let option: Float64Array = new Float64Array(bond.length);
  for (let i = iT - 1; i >= 0; i--) {
    bond = rollBack(tree, i, bond);
    option = rollBack(tree, i, option);
    if (exIdx.has(i)) {
      const gain = new Float64Array(bond.length);
      for (let j = 0; j < bond.length; j++) gain[j] = sign * (bond[j]! - spec.strike) - option[j]!;
      addSmoothedGain(option, gain);
    }
  }
  return option[0]!;
}

/**
 * Bond option by two smoothed trees (every step halved in the second) and Richardson extrapolation, as
 * {@link hullWhiteTreeSwaption}.
 */
export function hullWhiteTreeBondOption(
  curve: DiscountCurve,
  params: { a: number; sigma: number },
  spec: TreeBondOptionSpec,
  maxStep = 0.01,
): { value: number; coarse: number; fine: number } {
  const eventTimes = [spec.maturity, ...spec.exerciseTimes];
  const coarse = treeBondOption(buildHullWhiteTree(curve, params, { eventTimes, maxStep }), spec);
  const fine = treeBondOption(buildHullWhiteTree(curve, params, { eventTimes, maxStep, refine: 2 }), spec);
  return { value: 2 * fine - coarse, coarse, fine };
}

/** A Bermudan (or, with one exercise date, European) swaption on a fixed-for-floating swap, single curve. */
export interface TreeSwaptionSpec {
  /** `payer`: the right to pay fixed; `receiver`: to receive fixed. */
  type: 'payer' | 'receiver';
  /** Exercise dates (years); exercising at t enters the swap on the fixed periods starting at or after t. */
  exerciseTimes: number[];
  /** Fixed-leg payment dates T_1 < … < T_m (years); the first period starts at `startTime`. */
  payTimes: number[];
  /** Start of the first fixed period, T_0 (years). */
  startTime: number;
  /** Fixed rate (decimal per year). */
  strike: number;
  /** Accrual of each fixed period (years); default T_i − T_{i−1}. */
  accruals?: number[];
  /** Notional (default 1). */
  notional?: number;
}

/**
 * Prices a Bermudan swaption on the tree by backward induction. The underlying swap entered at an exercise date
 * equal to a period start T_k is worth, per unit notional, 1 − P(t, T_m) − K Σ_{i>k} τ_i P(t, T_i) (payer; Brigo &
 * Mercurio 2006, Sec. 1.5.3, single-curve forward-swap value), computed on the tree by rolling back the coupon
 * bond Σ_{i>k} c_i P(t, T_i) with c_i = Kτ_i (+1 at T_m).
 */
export function treeBermudanSwaption(tree: HullWhiteTree, spec: TreeSwaptionSpec): number {
  const m = spec.payTimes.length;
  if (m < 1) fail('E_SWAPTION', 'swaption.payTimes', 'must hold at least one payment date', spec.payTimes);
  const starts = [spec.startTime, ...spec.payTimes.slice(0, -1)];
  spec.exerciseTimes.forEach((t, e) => {
    if (!starts.some((s) => Math.abs(s - t) <= 1e-10 * Math.max(1, t)))
      fail(
        'E_SWAPTION',
        `swaption.exerciseTimes[${e}]`,
        'must be the start of a fixed period (the start time or a payment date other than the last)',
        t,
      );
  });
  const notional = spec.notional ?? 1;
  const acc =
    spec.accruals ?? spec.payTimes.map((t, i) => t - (i === 0 ? spec.startTime : spec.payTimes[i - 1]!));
  const sign = spec.type === 'payer' ? 1 : -1;
  const payIdx = spec.payTimes.map((t, i) => treeIndex(tree, t, `swaption.payTimes[${i}]`));
  const exIdx = new Set(spec.exerciseTimes.map((t, i) => treeIndex(tree, t, `swaption.exerciseTimes[${i}]`)));
  const last = payIdx[m - 1]!;
  let bond: Float64Array = new Float64Array(2 * tree.width[last]! + 1);
  let option: Float64Array = new Float64Array(bond.length);
  for (let i = last; i >= 0; i--) {
    if (i < last) {
      bond = rollBack(tree, i, bond);
      option = rollBack(tree, i, option);
    }
    // Exercise first (the coupon bond holds only payments after t_i), then add the payments made at t_i.
    if (exIdx.has(i)) {
      const gain = new Float64Array(bond.length);
      for (let j = 0; j < bond.length; j++) gain[j] = sign * (1 - bond[j]!) - option[j]!;
      addSmoothedGain(option, gain);
    }
    payIdx.forEach((pi, c) => {
      if (pi !== i) return;
      const cf = spec.strike * acc[c]! + (c === m - 1 ? 1 : 0);
      for (let j = 0; j < bond.length; j++) bond[j] = bond[j]! + cf;
    });
  }
  return notional * option[0]!;
}

/**
 * Bermudan swaption by two smoothed trees, one with every step halved, combined by Richardson extrapolation
 * 2·V(Δt/2) − V(Δt) (L. F. Richardson 1911; valid because the smoothed tree converges at first order in Δt, which
 * is tested). Returns the extrapolated value and the two tree values, whose difference is an error indicator.
 */
export function hullWhiteTreeSwaption(
  curve: DiscountCurve,
  params: { a: number; sigma: number },
  spec: TreeSwaptionSpec,
  maxStep = 0.01,
): { value: number; coarse: number; fine: number } {
  const eventTimes = [spec.startTime, ...spec.exerciseTimes, ...spec.payTimes];
  const coarse = treeBermudanSwaption(buildHullWhiteTree(curve, params, { eventTimes, maxStep }), spec);
  const fine = treeBermudanSwaption(
    buildHullWhiteTree(curve, params, { eventTimes, maxStep, refine: 2 }),
    spec,
  );
  return { value: 2 * fine - coarse, coarse, fine };
}
