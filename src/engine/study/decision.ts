/**
 * The keep / drop / undecided rule for one stochastic factor (DESIGN step 7), with error control over
 * repeated looks (alpha spending) and over several factors (Holm).
 *
 * For a factor f, Δ_f = price(richest) − price(richest without f) (leave one out), SE from the paired paths,
 * b_f the error budget Monte Carlo noise does not cover, τ the materiality threshold, z the critical value:
 *   keep       if |Δ| − z·SE − b > τ
 *   drop       if |Δ| + z·SE + b < τ
 *   undecided  otherwise (never rounded to a verdict).
 */
import { fail, requireNonNegative, requirePositive } from '../errors.ts';
import { normQuantile, normSf } from './stats.ts';
import { log } from '../math/detMath.ts';

/** Largest critical value reported: Φ⁻¹ beyond it is below double precision (Φ(−38) ≈ 3e−316). */
export const Z_MAX = 38;

/** Verdict on one factor. */
export type Verdict = 'keep' | 'drop' | 'undecided';

/**
 * What Monte Carlo noise does not cover, in the deal's currency (same unit as Δ). Each part is a non-negative
 * magnitude; `exerciseGap` is null when the deal has no early exercise or no bound pair was computed (then the
 * limitation is reported separately).
 */
export interface ErrorBudget {
  /** |Δ(dt) − Δ(dt/2)|: change of Δ when the time step is halved, on the same random numbers. */
  stepHalving: number;
  /**
   * Effect of the two variants' calibration residuals on Δ (first order: |deal vega| × the largest analytic vol fit
   * error over the quotes that expire by the deal's last date).
   */
  calibration: number;
  /**
   * Effect of the two variants' Monte Carlo repricing errors on Δ: |deal vega| × (implied-vol error of each
   * simulated variant on its own calibrated vanillas beyond two standard errors). It catches a simulated model that
   * misprices its instruments by more than its analytic fit says (an approximate characteristic function, a
   * discretisation bias at the quotes). Absent in files written before it existed: counted as 0.
   */
  repricing?: number;
  /** Gap between an early-exercise lower bound and its upper bound; null when not applicable or not available. */
  exerciseGap: number | null;
}

/** Total budget b = sum of the parts (a conservative, triangle-inequality bound; common practice). */
export function budgetTotal(b: ErrorBudget): number {
  return b.stepHalving + b.calibration + (b.repricing ?? 0) + (b.exerciseGap ?? 0);
}

/** The materiality threshold τ, as the user states it. */
export type Threshold =
  /** Basis points of notional: τ = value × 1e−4 × notional. */
  | { kind: 'bp'; value: number }
  /** An amount in the deal's currency. */
  | { kind: 'amount'; value: number }
  /** A fraction of a quoted bid–offer width (amount in the deal's currency): τ = fraction × width. */
  | { kind: 'bidOffer'; fraction: number; width: number };

/** τ in the deal's currency. Refuses zero, negative or non-finite thresholds, naming the field. */
export function thresholdAmount(t: Threshold, notional: number, field = 'settings.threshold'): number {
  switch (t.kind) {
    case 'bp':
      requirePositive(
        `${field}.value`,
        t.value,
        'give a materiality threshold in basis points of notional, e.g. 5',
      );
      requirePositive('deal.notional', notional);
      return t.value * 1e-4 * notional;
    case 'amount':
      return requirePositive(
        `${field}.value`,
        t.value,
        'give a materiality threshold as an amount, e.g. 10000',
      );
    case 'bidOffer':
      requirePositive(`${field}.fraction`, t.fraction, 'give the fraction of the bid–offer width, e.g. 0.25');
      return t.fraction * requirePositive(`${field}.width`, t.width, 'give the quoted bid–offer width');
    default:
      return fail(
        'E_THRESHOLD_KIND',
        `${field}.kind`,
        "must be 'bp', 'amount' or 'bidOffer'",
        (t as { kind: unknown }).kind,
      );
  }
}

/** Alpha-spending family. */
export type SpendingKind = 'obrienFleming' | 'pocock';

/**
 * Cumulative error spent by information fraction t ∈ (0, 1], Lan & DeMets (1983), "Discrete sequential boundaries
 * for clinical trials", Biometrika 70(3), p. 659:
 *   O'Brien–Fleming type  α₁(t) = 2 − 2Φ(z_{α/2} / √t)
 *   Pocock type           α₂(t) = α · ln(1 + (e − 1) t)
 * Both equal α at t = 1.
 */
export function alphaSpent(kind: SpendingKind, alpha: number, t: number): number {
  const tt = Math.min(1, Math.max(0, t));
  if (tt === 0) return 0;
  if (kind === 'pocock') return alpha * log(1 + (Math.E - 1) * tt);
  return 2 * normSf(normQuantile(1 - alpha / 2) / Math.sqrt(tt));
}

/** One look of the sequential schedule. */
export interface Look {
  /** Paths simulated at this look. */
  paths: number;
  /** Information fraction paths / final paths. */
  fraction: number;
  /** Error spent up to and including this look. */
  spent: number;
  /** Error spent at this look (the increment), shared by all factors through Holm's step-down. */
  increment: number;
}

/**
 * The fixed doubling schedule of path counts (first, 2·first, 4·first, ..., final) with its error increments.
 * Over all looks, the chance of any wrong verdict is at most Σ increments = α (union bound over looks — a
 * conservative use of the spending function; exact group-sequential boundaries by recursive integration,
 * Armitage, McPherson & Rowe 1969, would be slightly tighter).
 */
export function lookSchedule(args: {
  firstPaths: number;
  finalPaths: number;
  alpha: number;
  spending: SpendingKind;
}): Look[] {
  const { firstPaths, finalPaths, alpha, spending } = args;
  requirePositive('settings.firstPaths', firstPaths);
  requirePositive('settings.paths', finalPaths);
  if (!(alpha > 0 && alpha < 0.5))
    fail('E_ALPHA', 'settings.alpha', 'must be in (0, 0.5)', alpha, 'e.g. 0.05');
  const counts: number[] = [];
  for (let n = Math.min(firstPaths, finalPaths); n < finalPaths; n *= 2) counts.push(n);
  counts.push(finalPaths);
  let prev = 0;
  return counts.map((paths) => {
    const fraction = paths / finalPaths;
    const spent = alphaSpent(spending, alpha, fraction);
    const look = { paths, fraction, spent, increment: Math.max(0, spent - prev) };
    prev = spent;
    return look;
  });
}

/** Δ of one factor at one look, with its SE and budget. */
export interface FactorEstimate {
  factor: string;
  /** Δ in the deal's currency. */
  delta: number;
  /** Standard error of Δ from paired paths. */
  se: number;
  budget: ErrorBudget;
}

/** Outcome for one factor at one look. */
export interface FactorLookDecision {
  factor: string;
  verdict: Verdict;
  delta: number;
  se: number;
  budget: number;
  /** Critical value used for this factor (Holm's step-down level at its rank). */
  z: number;
  /** Statistic of the more favourable side: max((|Δ| − b − τ)/SE, (τ − |Δ| − b)/SE). */
  statistic: number;
  /** Two-sided p-value of that statistic, 2(1 − Φ(statistic)). */
  pValue: number;
  /** The side the statistic points to. */
  side: 'keep' | 'drop';
}

/**
 * One look over m factors: Holm (1979), "A simple sequentially rejective multiple test procedure",
 * Scand. J. Statist. 6(2), pp. 65–70. Sort the p-values ascending; the r-th (0-based) is decisive if it and all
 * before it satisfy p ≤ α_look / (m − r); the first failure stops, all later factors are undecided.
 * A decisive factor's verdict is its side; the critical value z = Φ⁻¹(1 − α_look / (2(m − r))) is reported so
 * that the printed rule |Δ| ∓ z·SE ∓ b ≷ τ reproduces the verdict.
 */
export function decideLook(
  estimates: FactorEstimate[],
  tau: number,
  alphaLook: number,
): FactorLookDecision[] {
  requirePositive('threshold', tau, 'a threshold of zero cannot separate material from immaterial factors');
  const m = estimates.length;
  const rows = estimates.map((e) => {
    requireNonNegative(`se[${e.factor}]`, e.se);
    const b = budgetTotal(e.budget);
    const se = Math.max(e.se, 1e-300);
    const zKeep = (Math.abs(e.delta) - b - tau) / se;
    const zDrop = (tau - Math.abs(e.delta) - b) / se;
    const side: 'keep' | 'drop' = zKeep >= zDrop ? 'keep' : 'drop';
    const statistic = Math.max(zKeep, zDrop);
    const pValue = e.se === 0 ? (statistic > 0 ? 0 : 1) : Math.min(1, 2 * normSf(statistic));
    return { e, b, statistic, pValue, side };
  });
  const order = rows.map((_, i) => i).sort((i, j) => rows[i]!.pValue - rows[j]!.pValue || i - j);
  const out: FactorLookDecision[] = new Array(m);
  let stopped = false;
  order.forEach((i, r) => {
    const row = rows[i]!;
    const level = alphaLook / (m - r);
    // Upper quantile from the lower tail: 1 − level/2 rounds to 1 for the tiny levels of early looks. A look that
    // spends nothing (level 0 after underflow) cannot decide; its z is reported at the cap Z_MAX (finite, so the
    // study file stays JSON).
    const z = level > 0 ? Math.min(Z_MAX, -normQuantile(level / 2)) : Z_MAX;
    const passes = !stopped && level > 0 && row.pValue <= level && row.statistic > 0;
    if (!passes) stopped = true;
    out[i] = {
      factor: row.e.factor,
      verdict: passes ? row.side : 'undecided',
      delta: row.e.delta,
      se: row.e.se,
      budget: row.b,
      z,
      statistic: row.statistic,
      pValue: row.pValue,
      side: row.side,
    };
  });
  return out;
}

/** The sequential outcome for one factor. */
export interface FactorDecision {
  factor: string;
  verdict: Verdict;
  /** Index of the look that decided it; null while undecided. */
  decidedAtLook: number | null;
  /** The decision row at the deciding look (or at the last look when undecided). */
  at: FactorLookDecision;
  /** The rows of every look, in order (for the convergence plot). */
  history: FactorLookDecision[];
}

/**
 * Runs the rule over the looks: a verdict, once reached, is final (the look that reached it is recorded); factors
 * not decided by the last look stay undecided. `looks[j]` holds the estimates of all factors at look j.
 */
export function decideSequential(args: {
  looks: FactorEstimate[][];
  schedule: Look[];
  tau: number;
}): FactorDecision[] {
  const { looks, schedule, tau } = args;
  if (looks.length === 0) return [];
  if (looks.length > schedule.length)
    fail('E_LOOKS', 'looks', `must not outnumber the schedule (${schedule.length} looks)`, looks.length);
  const factors = looks[0]!.map((e) => e.factor);
  const res: FactorDecision[] = factors.map((factor) => ({
    factor,
    verdict: 'undecided' as Verdict,
    decidedAtLook: null,
    at: undefined as unknown as FactorLookDecision,
    history: [],
  }));
  looks.forEach((est, j) => {
    const rows = decideLook(est, tau, schedule[j]!.increment);
    rows.forEach((row, i) => {
      const r = res[i]!;
      r.history.push(row);
      if (r.decidedAtLook === null) {
        r.at = row;
        if (row.verdict !== 'undecided') {
          r.verdict = row.verdict;
          r.decidedAtLook = j;
        }
      }
    });
  });
  return res;
}

/** Result of the final joint test of the recommended reduced model against the richest. */
export interface JointTest {
  /** Factors left out of the reduced model (those dropped). */
  dropped: string[];
  /** price(reduced) − price(richest). */
  difference: number;
  se: number;
  /** Total budget b of the difference. */
  budget: number;
  /** Its parts, when the caller gave them (absent in files written before they were recorded). */
  budgetParts?: ErrorBudget;
  z: number;
  /** `confirmed`: the dropped factors together are immaterial; `rejected`: together they matter; else `inconclusive`. */
  outcome: 'confirmed' | 'rejected' | 'inconclusive' | 'nothingDropped';
}

/**
 * Joint check of the reduced model: the same inequalities as the single-factor rule applied to
 * D = price(reduced) − price(richest), at its own level α (a separate, confirmatory test; common practice).
 * Dropping factors one by one can hide a joint effect (interactions); this test catches it.
 */
export function jointTest(args: {
  dropped: string[];
  difference: number;
  se: number;
  /** The budget of the difference: its parts (recorded with the outcome), or a total. */
  budget: ErrorBudget | number;
  tau: number;
  alpha: number;
}): JointTest {
  const { dropped, difference, se, tau, alpha } = args;
  const parts = typeof args.budget === 'number' ? null : { ...args.budget };
  const budget = parts ? budgetTotal(parts) : (args.budget as number);
  requireNonNegative('joint.budget', budget);
  const z = normQuantile(1 - alpha / 2);
  let outcome: JointTest['outcome'];
  if (dropped.length === 0) outcome = 'nothingDropped';
  else if (Math.abs(difference) + z * se + budget < tau) outcome = 'confirmed';
  else if (Math.abs(difference) - z * se - budget > tau) outcome = 'rejected';
  else outcome = 'inconclusive';
  return { dropped, difference, se, budget, ...(parts ? { budgetParts: parts } : {}), z, outcome };
}
