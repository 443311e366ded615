/**
 * One optimiser wrapper for every calibration: bounded Levenberg–Marquardt on weighted residuals.
 * Method: K. Levenberg, "A method for the solution of certain non-linear problems in least squares",
 * Q. Appl. Math. 2, 1944; D.W. Marquardt, "An algorithm for least-squares estimation of nonlinear parameters",
 * SIAM J. Appl. Math. 11, 1963. Damping update and stopping rules: K. Madsen, H.B. Nielsen, O. Tingleff,
 * "Methods for non-linear least squares problems", 2nd ed., IMM DTU 2004, Algorithm 3.16 and eq. (3.14).
 * Bounds by transformation: a parameter with both bounds is p = lo + (hi − lo)/(1 + e^{−z}), with one bound
 * p = lo + e^{z} (or hi − e^{z}), without bounds p = |p_start|·z; the iteration runs in z (common practice).
 */
import { issue, type FieldIssue } from '../errors.ts';
import { spdCholesky, spdInverse, spdSolve, symmetricEigen } from '../math/linalg.ts';
import { nowMs } from './clock.ts';
import { exp, hypotOf, log } from '../math/detMath.ts';

/** One named model parameter of a fit. */
export interface FitParameter {
  name: string;
  /** Starting value (moved inside the bounds when on or outside them). */
  initial: number;
  lower?: number;
  upper?: number;
  /** Held at `initial`, not fitted. */
  fixed?: boolean;
}

/**
 * A named constraint g(p) ≥ 0. `report`: evaluated and shown; `enforce`: a penalty residual
 * `penaltyWeight · max(0, −g)` is added to the fit.
 */
export interface FitConstraint {
  name: string;
  g(p: Readonly<Record<string, number>>): number;
  mode: 'report' | 'enforce';
  penaltyWeight?: number;
}

/** The calibration problem: instruments report residuals for named parameters. */
export interface FitProblem {
  parameters: FitParameter[];
  /** Residuals (model − market, in the instrument's unit), one per instrument. */
  residuals(p: Readonly<Record<string, number>>): ArrayLike<number>;
  /** Optional Jacobian ∂r_i/∂p_j (rows instruments, columns the free parameters in order). */
  jacobian?(p: Readonly<Record<string, number>>): number[][];
  /** Weight per instrument (default 1): the fit minimises Σ (w_i r_i)². */
  weights?: readonly number[];
  constraints?: FitConstraint[];
}

export interface FitOptions {
  /** Maximum residual evaluations (default 400). */
  maxEvaluations?: number;
  /** Gradient tolerance ε1 (default 1e-10). */
  gradientTol?: number;
  /** Step tolerance ε2 (default 1e-10). */
  stepTol?: number;
  /** Relative cost improvement below which an accepted step counts as converged (default 1e-12). */
  costTol?: number;
  /**
   * `full` (default): a new Jacobian at every accepted point. `broyden`: Broyden's rank-one secant update after every
   * trial step instead (C.G. Broyden, "A class of methods for solving nonlinear simultaneous equations", Math. Comp.
   * 19, 1965; in L–M: Madsen, Nielsen & Tingleff 2004, Sec. 3.4, eq. (3.19)), with a full Jacobian again after a
   * rejected step or a poor gain ratio (ϱ < 0.25), and before any stop is accepted, so the stopping tests and the
   * reported standard errors always use a full Jacobian. Pays when a Jacobian costs much more than a residual.
   */
  jacobianUpdate?: 'full' | 'broyden';
}

export type StopReason =
  'gradient' | 'step' | 'cost' | 'zero-residual' | 'max-evaluations' | 'non-finite' | 'singular';

/** What a fit returns: every field plain data. */
export interface FitReport {
  parameters: Record<string, number>;
  /** Asymptotic standard error per free parameter: sqrt(diag(s² (JᵀJ)⁻¹)), s² = Σ(w r)²/(m − n). */
  standardErrors: Record<string, number>;
  /** Condition number of the weighted Jacobian with columns scaled by |p_j| (sensitivity to relative changes). */
  conditionNumber: number;
  /** Weighted residuals w_i r_i at the solution. */
  weightedResiduals: number[];
  /** Raw residuals r_i at the solution. */
  residuals: number[];
  /** sqrt(mean(r_i²)) of the raw residuals. */
  rmse: number;
  evaluations: number;
  /** Full Jacobians computed (analytic or by differences) during the iteration. */
  jacobians: number;
  iterations: number;
  seconds: number;
  stopReason: StopReason;
  converged: boolean;
  constraints: { name: string; value: number; satisfied: boolean; mode: 'report' | 'enforce' }[];
  warnings: FieldIssue[];
}

interface Transform {
  toP(z: number): number;
  toZ(p: number): number;
  /** dp/dz at z. */
  dPdZ(z: number): number;
}

function transformFor(par: FitParameter): Transform {
  const lo = par.lower;
  const hi = par.upper;
  if (lo !== undefined && hi !== undefined)
    return {
      toP: (z) => lo + (hi - lo) / (1 + exp(-z)),
      dPdZ: (z) => {
        const e = 1 / (1 + exp(-z));
        return (hi - lo) * e * (1 - e);
      },
      toZ: (p) => {
        const span = hi - lo;
        const x = Math.min(Math.max((p - lo) / span, 1e-9), 1 - 1e-9);
        return log(x / (1 - x));
      },
    };
  if (lo !== undefined)
    return {
      toP: (z) => lo + exp(z),
      toZ: (p) => log(Math.max(p - lo, 1e-12)),
      dPdZ: (z) => exp(z),
    };
  if (hi !== undefined)
    return {
      toP: (z) => hi - exp(z),
      toZ: (p) => log(Math.max(hi - p, 1e-12)),
      dPdZ: (z) => -exp(z),
    };
  // Unbounded: scaled by the starting magnitude so every z is of order one (steps and tolerances compare alike).
  const sc = Math.abs(par.initial) > 1e-12 ? Math.abs(par.initial) : 1;
  return { toP: (z) => z * sc, toZ: (p) => p / sc, dPdZ: () => sc };
}

/** Fits the free parameters of `problem` and returns a full report (never throws for a poor fit: see `converged`). */
export function fitLeastSquares(problem: FitProblem, options: FitOptions = {}): FitReport {
  const t0 = nowMs();
  const maxEval = options.maxEvaluations ?? 400;
  const eps1 = options.gradientTol ?? 1e-10;
  const eps2 = options.stepTol ?? 1e-10;
  const eps3 = options.costTol ?? 1e-12;
  const free = problem.parameters.filter((p) => !p.fixed);
  const tr = free.map(transformFor);
  const fixedValues: Record<string, number> = {};
  for (const p of problem.parameters) if (p.fixed) fixedValues[p.name] = p.initial;
  const n = free.length;
  const toParams = (z: readonly number[]): Record<string, number> => {
    const out: Record<string, number> = { ...fixedValues };
    free.forEach((p, j) => (out[p.name] = tr[j]!.toP(z[j]!)));
    return out;
  };
  const enforced = (problem.constraints ?? []).filter((c) => c.mode === 'enforce');
  let evaluations = 0;
  const weights: readonly number[] | undefined = problem.weights;
  const weighted = (params: Record<string, number>): number[] => {
    evaluations++;
    const r = problem.residuals(params);
    const out: number[] = new Array(r.length + enforced.length);
    for (let i = 0; i < r.length; i++) out[i] = r[i]! * (weights ? weights[i]! : 1);
    enforced.forEach((c, k) => (out[r.length + k] = (c.penaltyWeight ?? 100) * Math.max(0, -c.g(params))));
    return out;
  };
  const cost = (r: readonly number[]) => 0.5 * r.reduce((s, x) => s + x * x, 0);
  const finite = (r: readonly number[]) => r.every(Number.isFinite);

  const jacobianZ = (z: number[], r0: number[]): number[][] => {
    const m = r0.length;
    const J = Array.from({ length: m }, () => new Array<number>(n).fill(0));
    if (problem.jacobian) {
      // Analytic ∂r/∂p of the instruments, chained with dp/dz and the weights; penalty rows by differences.
      const params = toParams(z);
      const Jp = problem.jacobian(params);
      const mi = m - enforced.length;
      for (let i = 0; i < mi; i++)
        for (let j = 0; j < n; j++) J[i]![j] = Jp[i]![j]! * tr[j]!.dPdZ(z[j]!) * (weights ? weights[i]! : 1);
      for (let j = 0; j < n && enforced.length; j++) {
        const h = 1e-7 * Math.max(1, Math.abs(z[j]!));
        const zj = z.slice();
        zj[j] = z[j]! + h;
        const pj = toParams(zj);
        enforced.forEach((c, k) => {
          const v1 = (c.penaltyWeight ?? 100) * Math.max(0, -c.g(pj));
          J[mi + k]![j] = (v1 - r0[mi + k]!) / h;
        });
      }
      return J;
    }
    for (let j = 0; j < n; j++) {
      const h = 1e-7 * Math.max(1, Math.abs(z[j]!));
      const zj = z.slice();
      zj[j] = z[j]! + h;
      const r1 = weighted(toParams(zj));
      for (let i = 0; i < m; i++) J[i]![j] = (r1[i]! - r0[i]!) / h;
    }
    return J;
  };

  let z = free.map((p, j) => tr[j]!.toZ(p.initial));
  let r = weighted(toParams(z));
  let stopReason: StopReason = 'max-evaluations';
  let iterations = 0;
  let jacobians = 0;
  /** The iteration's last Jacobian (in z) when it was computed in full at the final point. */
  let finalJz: number[][] | undefined;
  const secant = options.jacobianUpdate === 'broyden';
  if (!finite(r)) stopReason = 'non-finite';
  else if (n > 0) {
    let F = cost(r);
    let J = jacobianZ(z, r);
    jacobians++;
    let fresh = true;
    let costRefreshes = 0;
    const normalEq = (Jm: number[][], rv: number[]) => {
      const A = Array.from({ length: n }, () => new Array<number>(n).fill(0));
      const g = new Array<number>(n).fill(0);
      for (let i = 0; i < rv.length; i++) {
        const row = Jm[i]!;
        for (let a = 0; a < n; a++) {
          g[a] += row[a]! * rv[i]!;
          for (let b = 0; b <= a; b++) A[a]![b] += row[a]! * row[b]!;
        }
      }
      for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) A[a]![b] = A[b]![a]!;
      return { A, g };
    };
    let { A, g } = normalEq(J, r);
    const refresh = () => {
      J = jacobianZ(z, r);
      jacobians++;
      ({ A, g } = normalEq(J, r));
      fresh = true;
    };
    /** Broyden's rank-one update J ← J + (r(z + h) − r(z) − J h) hᵀ/(hᵀh) (MNT 2004 eq. (3.19)). */
    const broyden = (h: number[], rNew: number[]) => {
      const hh = h.reduce((acc, x) => acc + x * x, 0);
      if (!(hh > 0)) return;
      for (let i = 0; i < rNew.length; i++) {
        const row = J[i]!;
        let jh = 0;
        for (let j = 0; j < n; j++) jh += row[j]! * h[j]!;
        const c = (rNew[i]! - r[i]! - jh) / hh;
        for (let j = 0; j < n; j++) row[j] = row[j]! + c * h[j]!;
      }
      fresh = false;
    };
    // Madsen, Nielsen & Tingleff (2004), Algorithm 3.16: μ0 = τ·max A_ii, τ = 1e-3, ν = 2.
    let mu = 1e-3 * Math.max(...A.map((row, i) => row[i]!), 1e-12);
    let nu = 2;
    let smallImprovements = 0;
    for (;;) {
      if (F < 1e-30) {
        stopReason = 'zero-residual';
        break;
      }
      if (Math.max(...g.map(Math.abs)) <= eps1) {
        if (secant && !fresh) {
          refresh();
          continue;
        }
        stopReason = 'gradient';
        break;
      }
      if (evaluations >= maxEval) {
        stopReason = 'max-evaluations';
        break;
      }
      iterations++;
      const M = A.map((row, i) => row.map((v, j) => (i === j ? v + mu : v)));
      const L = spdCholesky(M);
      if (!L) {
        mu *= nu;
        nu *= 2;
        if (!Number.isFinite(mu)) {
          stopReason = 'singular';
          break;
        }
        continue;
      }
      const h = spdSolve(
        L,
        g.map((x) => -x),
      );
      const zNorm = hypotOf(z);
      if (hypotOf(h) <= eps2 * (zNorm + eps2)) {
        if (secant && !fresh) {
          refresh();
          continue;
        }
        stopReason = 'step';
        break;
      }
      const zNew = z.map((v, j) => v + h[j]!);
      const rNew = weighted(toParams(zNew));
      const FNew = finite(rNew) ? cost(rNew) : Infinity;
      // Gain ratio ϱ = (F(x) − F(x_new)) / (L(0) − L(h)), L(0) − L(h) = ½ hᵀ(μh − g)  (MNT 2004 eq. 3.14).
      const predicted = 0.5 * h.reduce((s, hj, j) => s + hj * (mu * hj - g[j]!), 0);
      const gain = (F - FNew) / predicted;
      if (secant && Number.isFinite(FNew)) broyden(h, rNew);
      if (gain > 0 && Number.isFinite(FNew)) {
        const improvement = (F - FNew) / Math.max(F, 1e-300);
        z = zNew;
        r = rNew;
        F = FNew;
        if (improvement < eps3) smallImprovements++;
        else smallImprovements = 0;
        if (smallImprovements >= 2) {
          if (secant && !fresh && costRefreshes < 2) {
            costRefreshes++;
            smallImprovements = 0;
            refresh();
            continue;
          }
          stopReason = 'cost';
          break;
        }
        if (!secant || gain < 0.25) refresh();
        else ({ A, g } = normalEq(J, r));
        mu *= Math.max(1 / 3, 1 - (2 * gain - 1) * (2 * gain - 1) * (2 * gain - 1));
        nu = 2;
      } else {
        // A rejected step from an updated Jacobian: the next one starts from a full Jacobian.
        if (secant && !fresh) refresh();
        mu *= nu;
        nu *= 2;
        if (!Number.isFinite(mu) || mu > 1e30) {
          stopReason = 'step';
          break;
        }
      }
    }
    if (fresh) finalJz = J;
  } else stopReason = 'zero-residual';

  const params = toParams(z);
  const rawAll = problem.residuals(params);
  evaluations++;
  const raw = Array.from(rawAll);
  const m = raw.length;
  const wres = raw.map((x, i) => x * (weights ? weights[i]! : 1));
  const rmse = Math.sqrt(raw.reduce((s, x) => s + x * x, 0) / Math.max(m, 1));
  const converged =
    stopReason === 'gradient' ||
    stopReason === 'step' ||
    stopReason === 'cost' ||
    stopReason === 'zero-residual';

  // Standard errors and conditioning from a Jacobian in the parameters themselves: the problem's analytic one when
  // it has one, else the iteration's own full Jacobian at the solution (when no parameter sits so close to a bound
  // that dp/dz nearly vanishes), else one-sided differences (away from bounds).
  const standardErrors: Record<string, number> = {};
  let conditionNumber = NaN;
  const warnings: FieldIssue[] = [];
  if (n > 0) {
    const Jp = Array.from({ length: m }, () => new Array<number>(n).fill(0));
    const Ja = problem.jacobian ? problem.jacobian(params) : undefined;
    if (Ja)
      for (let i = 0; i < m; i++)
        for (let j = 0; j < n; j++) Jp[i]![j] = Ja[i]![j]! * (weights ? weights[i]! : 1);
    else if (
      finalJz &&
      free.every((par, j) => tr[j]!.dPdZ(z[j]!) > 1e-6 * Math.max(Math.abs(params[par.name]!), 1e-3))
    )
      // The iteration's full Jacobian at this point, ∂(w r)/∂z, divided by dp/dz (chain rule): no new evaluations.
      for (let i = 0; i < m; i++)
        for (let j = 0; j < n; j++) Jp[i]![j] = finalJz[i]![j]! / tr[j]!.dPdZ(z[j]!);
    else
      free.forEach((par, j) => {
        const p0 = params[par.name]!;
        let h = 1e-6 * Math.max(Math.abs(p0), 1e-3);
        if (par.upper !== undefined && p0 + h > par.upper) h = -h;
        const p1 = { ...params, [par.name]: p0 + h };
        const r1 = problem.residuals(p1);
        evaluations++;
        for (let i = 0; i < m; i++) Jp[i]![j] = ((r1[i]! - raw[i]!) * (weights ? weights[i]! : 1)) / h;
      });
    const JtJ = Array.from({ length: n }, (_, a) =>
      Array.from({ length: n }, (_, b) => Jp.reduce((s, row) => s + row[a]! * row[b]!, 0)),
    );
    const s2 = m > n ? wres.reduce((s, x) => s + x * x, 0) / (m - n) : NaN;
    const inv = spdInverse(JtJ);
    free.forEach((par, j) => {
      standardErrors[par.name] =
        inv && Number.isFinite(s2) ? Math.sqrt(Math.max(s2 * inv[j]![j]!, 0)) : Infinity;
    });
    const scale = free.map((par) => Math.max(Math.abs(params[par.name]!), 1e-8));
    const S = JtJ.map((row, a) => row.map((v, b) => v * scale[a]! * scale[b]!));
    // A non-finite Jacobian has no condition number (the eigen-decomposition rejects it): report it as infinite.
    const ev = S.every((row) => row.every(Number.isFinite)) ? symmetricEigen(S).values : [NaN];
    const lo = ev[0]!;
    const hi = ev[ev.length - 1]!;
    conditionNumber = lo > 0 ? Math.sqrt(hi / lo) : Infinity;
    if (!inv)
      warnings.push(
        issue(
          'W_FIT_SINGULAR',
          'calibration',
          'has a singular Jacobian: some parameters are not identified',
          conditionNumber,
          'fix one of the parameters or add instruments that depend on it',
          'warning',
        ),
      );
    if (m <= n)
      warnings.push(
        issue(
          'W_FIT_NO_DOF',
          'calibration',
          `has ${m} residuals for ${n} free parameters: no standard errors`,
          m,
          'add quotes',
          'warning',
        ),
      );
  }
  if (!converged)
    warnings.push(
      issue(
        'W_FIT_NOT_CONVERGED',
        'calibration',
        'stopped before convergence',
        stopReason,
        'the parameters are the best found, not a converged fit: widen the evaluation budget or check the quotes',
        'warning',
      ),
    );
  const constraints = (problem.constraints ?? []).map((c) => {
    const value = c.g(params);
    return { name: c.name, value, satisfied: value >= 0, mode: c.mode };
  });
  return {
    parameters: params,
    standardErrors,
    conditionNumber,
    weightedResiduals: wres,
    residuals: raw,
    rmse,
    evaluations,
    jacobians,
    iterations,
    seconds: (nowMs() - t0) / 1000,
    stopReason,
    converged,
    constraints,
    warnings,
  };
}

/** What {@link fitFromStarts} ran: every fit in start order, and the starts it left out. */
export interface MultiStartFits<S> {
  runs: { start: S; fit: FitReport }[];
  /** Starts not run because an earlier one already fitted within `goodRmse`. */
  skipped: S[];
}

/**
 * Multi-start fitting with an early stop: the starts are fitted in order, and the remaining ones are skipped once a
 * fit has converged with a raw-residual RMSE of at most `goodRmse`. Rule (common practice for multi-start
 * least squares): another start could lower the RMSE by at most that fit's own RMSE, so with `goodRmse` a tenth of
 * the acceptance tolerance no further start can change whether the fit is accepted. A start caught in a poorer local
 * minimum (RMSE above `goodRmse`) never stops the search, so the protection of multiple starts against local minima
 * is kept; what a skipped start would have added is the spread of parameters across minima of equal fit, which the
 * caller reports as not measured. `goodRmse` ≤ 0 runs every start.
 */
export function fitFromStarts<S>(
  starts: readonly S[],
  fit: (start: S) => FitReport,
  goodRmse: number,
): MultiStartFits<S> {
  const runs: { start: S; fit: FitReport }[] = [];
  for (let i = 0; i < starts.length; i++) {
    const f = fit(starts[i]!);
    runs.push({ start: starts[i]!, fit: f });
    if (goodRmse > 0 && f.converged && f.rmse <= goodRmse) return { runs, skipped: starts.slice(i + 1) };
  }
  return { runs, skipped: [] };
}
