/**
 * Implied-volatility surface of one equity from a grid of quotes (rows = expiries, columns = strikes or spot
 * moneyness K/S₀).
 *
 * Interpolation, as stated to users:
 * - In strike: each expiry row is re-expressed in forward log-moneyness k = ln(K / F(Tᵢ)) and its implied vols are
 *   joined by a monotone piecewise-cubic Hermite curve (F. N. Fritsch, R. E. Carlson, "Monotone piecewise cubic
 *   interpolation", SIAM J. Numer. Anal. 17(2) (1980) 238–246, with the harmonic-mean slopes of F. N. Fritsch,
 *   J. Butland, LLNL report UCRL-87559, 1984): continuous first derivative, no overshoot, so no negative vols.
 *   Outside a row's strike range the vol is held flat.
 * - In expiry: total implied variance w(T, k) = σ²T is linear in T between expiry rows at fixed forward
 *   log-moneyness k (common practice; it keeps w increasing in T when the quotes do). Before the first expiry the
 *   vol of the first row is held (w = σ₁(k)²·T); after the last, the vol of the last row.
 * Arbitrage checks (warnings, never silent changes):
 * - calendar: w(T, k) must not decrease in T at fixed k (J. Gatheral, "The Volatility Surface", Wiley 2006, ch. 3);
 * - butterfly / vertical spread: undiscounted call prices must decrease in strike with slope in [−1, 0] and be
 *   convex (R. C. Merton, "Theory of rational option pricing", Bell J. Econ. 4 (1973), Theorems 1–8; Carr & Madan,
 *   "A note on sufficient conditions for no arbitrage", Finance Research Letters 2 (2005)).
 */
import { EngineError, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import { normCdf } from '../math/normal.ts';
import { bracketIndex } from '../math/search.ts';
import type { VolGridSpec } from './types.ts';
import { log } from '../math/detMath.ts';

/** A queryable implied-vol surface. Times in years, strikes in currency units, vols lognormal decimals. */
export interface VolSurface {
  /** Implied vol σ(T, K) (T > 0). */
  vol(T: number, K: number): number;
  /** Total implied variance σ(T, K)²·T. */
  totalVariance(T: number, K: number): number;
  /** Expiries of the grid rows (years). */
  readonly expiries: readonly number[];
  /** Absolute strikes of row i (currency units). */
  strikesAt(i: number): readonly number[];
  /** Quoted vols of row i. */
  volsAt(i: number): readonly number[];
  /** Spot used to turn spot moneyness into strikes. */
  readonly spot: number;
  /** Forward F(0,T) used for forward moneyness. */
  forward(T: number): number;
  /** Path of the grid in the input, e.g. `equities.ALDR.vols`. */
  readonly field: string;
}

function num(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

function increasingIssues(arr: unknown, field: string, what: string, out: FieldIssue[]): boolean {
  if (!Array.isArray(arr) || arr.length === 0) {
    out.push(issue('E_VOL_GRID_EMPTY', field, `must list at least one ${what}`, arr));
    return false;
  }
  let ok = true;
  for (let i = 0; i < arr.length; i++) {
    const v = arr[i];
    if (!num(v) || v <= 0) {
      out.push(issue('E_VOL_GRID_AXIS', `${field}[${i}]`, `must be a finite ${what} > 0`, v));
      ok = false;
    } else if (i > 0 && num(arr[i - 1]) && !(v > arr[i - 1])) {
      out.push(
        issue(
          'E_VOL_GRID_ORDER',
          `${field}[${i}]`,
          `must be greater than ${field}[${i - 1}] = ${arr[i - 1]}`,
          v,
        ),
      );
      ok = false;
    }
  }
  return ok;
}

/** Every problem with a vol grid, as issues naming the cell (`equities.ALDR.vols.vols[2][3]`). */
export function volGridIssues(spec: VolGridSpec, field = 'vols'): FieldIssue[] {
  const out: FieldIssue[] = [];
  increasingIssues(spec?.expiries, `${field}.expiries`, 'expiry in years', out);
  const hasK = spec?.strikes !== undefined;
  const hasM = spec?.moneyness !== undefined;
  if (hasK === hasM) {
    out.push(
      issue(
        'E_VOL_GRID_STRIKES',
        field,
        'must give exactly one of strikes (absolute) or moneyness (K/spot)',
        hasK ? 'both given' : 'neither given',
      ),
    );
    return out;
  }
  const axis = hasK ? 'strikes' : 'moneyness';
  increasingIssues(
    hasK ? spec.strikes : spec.moneyness,
    `${field}.${axis}`,
    hasK ? 'strike' : 'moneyness',
    out,
  );
  const nT = Array.isArray(spec.expiries) ? spec.expiries.length : 0;
  const nK = ((hasK ? spec.strikes : spec.moneyness) ?? []).length;
  if (!Array.isArray(spec.vols) || spec.vols.length !== nT) {
    out.push(
      issue(
        'E_VOL_GRID_SHAPE',
        `${field}.vols`,
        `must have one row per expiry (${nT})`,
        Array.isArray(spec.vols) ? spec.vols.length : spec.vols,
      ),
    );
    return out;
  }
  spec.vols.forEach((row, i) => {
    if (!Array.isArray(row) || row.length !== nK) {
      out.push(
        issue(
          'E_VOL_GRID_SHAPE',
          `${field}.vols[${i}]`,
          `must have one vol per ${axis === 'strikes' ? 'strike' : 'moneyness'} (${nK})`,
          Array.isArray(row) ? row.length : row,
        ),
      );
      return;
    }
    row.forEach((v, j) => {
      if (!num(v) || v <= 0)
        out.push(
          issue(
            'E_VOL_QUOTE',
            `${field}.vols[${i}][${j}]`,
            'must be a finite lognormal vol > 0 (decimal, e.g. 0.2 for 20 %)',
            v,
            `fix the quote at expiry ${spec.expiries[i]}, ${axis} ${(hasK ? spec.strikes : spec.moneyness)![j]}`,
          ),
        );
    });
  });
  return out;
}

/** Monotone cubic Hermite interpolant through (x, y), flat outside [x₀, x_{n−1}] (Fritsch & Carlson 1980). */
export function monotoneCubic(x: readonly number[], y: readonly number[]): (t: number) => number {
  const n = x.length;
  if (n === 1) return () => y[0]!;
  const h: number[] = [];
  const s: number[] = [];
  for (let i = 0; i < n - 1; i++) {
    h.push(x[i + 1]! - x[i]!);
    s.push((y[i + 1]! - y[i]!) / h[i]!);
  }
  const d = new Array<number>(n).fill(0);
  // Interior slopes: weighted harmonic mean of the secants when they have the same sign, else 0 (Fritsch–Butland).
  for (let i = 1; i < n - 1; i++) {
    if (s[i - 1]! * s[i]! > 0) {
      const w1 = 2 * h[i]! + h[i - 1]!;
      const w2 = h[i]! + 2 * h[i - 1]!;
      d[i] = (w1 + w2) / (w1 / s[i - 1]! + w2 / s[i]!);
    }
  }
  // End slopes: one-sided three-point formula, limited to keep monotonicity (Fritsch & Carlson 1980, §4).
  const endSlope = (h0: number, h1: number, s0: number, s1: number): number => {
    let e = ((2 * h0 + h1) * s0 - h0 * s1) / (h0 + h1);
    if (e * s0 <= 0) e = 0;
    else if (s0 * s1 <= 0 && Math.abs(e) > Math.abs(3 * s0)) e = 3 * s0;
    return e;
  };
  if (n === 2) {
    d[0] = s[0]!;
    d[1] = s[0]!;
  } else {
    d[0] = endSlope(h[0]!, h[1]!, s[0]!, s[1]!);
    d[n - 1] = endSlope(h[n - 2]!, h[n - 3]!, s[n - 2]!, s[n - 3]!);
  }
  return (t: number): number => {
    if (t <= x[0]!) return y[0]!;
    if (t >= x[n - 1]!) return y[n - 1]!;
    const lo = bracketIndex(x, t);
    const hh = h[lo]!;
    const u = (t - x[lo]!) / hh;
    const u2 = u * u;
    const u3 = u2 * u;
    return (
      (2 * u3 - 3 * u2 + 1) * y[lo]! +
      (u3 - 2 * u2 + u) * hh * d[lo]! +
      (-2 * u3 + 3 * u2) * y[lo + 1]! +
      (u3 - u2) * hh * d[lo + 1]!
    );
  };
}

/**
 * Builds the vol surface of a grid after validating it (throws EngineError listing every bad cell).
 * `spot` turns moneyness into strikes; `forward(T)` gives F(0,T) for forward moneyness (e.g. from equityForward).
 */
export function makeVolSurface(
  spec: VolGridSpec,
  spot: number,
  forward: (t: number) => number,
  field = 'vols',
): VolSurface {
  const issues = volGridIssues(spec, field);
  if (!(num(spot) && spot > 0))
    issues.push(issue('E_NOT_POSITIVE', `${field} spot`, 'must be a finite number > 0', spot));
  throwIfErrors(issues, 'E_VOL_GRID');
  const expiries = spec.expiries.slice();
  const baseStrikes = spec.strikes ? spec.strikes.slice() : spec.moneyness!.map((m) => m * spot);
  const rows = expiries.map((T, i) => {
    const F = forward(T);
    if (!(num(F) && F > 0))
      throw new EngineError('E_FORWARD', `${field}: forward at T = ${T} must be > 0 (got ${F})`, [
        issue('E_FORWARD', `${field}.expiries[${i}]`, 'must have a positive forward', F),
      ]);
    const ks = baseStrikes.map((K) => log(K / F));
    const vols = spec.vols[i]!.slice();
    return { T, ks, vols, interp: monotoneCubic(ks, vols) };
  });

  function rowVariance(i: number, k: number): number {
    const r = rows[i]!;
    const v = r.interp(k);
    return v * v * r.T;
  }

  function totalVarianceAtK(T: number, k: number): number {
    const n = rows.length;
    if (T <= expiries[0]!) {
      const v = rows[0]!.interp(k);
      return v * v * T;
    }
    if (T >= expiries[n - 1]!) {
      const v = rows[n - 1]!.interp(k);
      return v * v * T;
    }
    let lo = 0;
    while (expiries[lo + 1]! < T) lo++;
    const t0 = expiries[lo]!;
    const t1 = expiries[lo + 1]!;
    const w0 = rowVariance(lo, k);
    const w1 = rowVariance(lo + 1, k);
    return w0 + ((w1 - w0) * (T - t0)) / (t1 - t0);
  }

  function checkQuery(T: number, K: number): void {
    if (!(num(T) && T > 0) || !(num(K) && K > 0))
      throw new EngineError(
        'E_VOL_QUERY',
        `${field}: vol asked at T = ${T}, K = ${K}; both must be finite and > 0`,
        [issue('E_VOL_QUERY', field, 'must be queried at T > 0 and K > 0', { T, K })],
      );
  }

  const surface: VolSurface = {
    expiries,
    spot,
    field,
    forward,
    strikesAt: (i) => baseStrikes,
    volsAt: (i) => rows[i]!.vols,
    totalVariance(T, K) {
      checkQuery(T, K);
      return totalVarianceAtK(T, log(K / forward(T)));
    },
    vol(T, K) {
      checkQuery(T, K);
      return Math.sqrt(totalVarianceAtK(T, log(K / forward(T))) / T);
    },
  };
  return surface;
}

/** Undiscounted Black (1976) call on a forward F with total standard deviation sd = σ√T (common practice). */
function blackCallUndiscounted(F: number, K: number, sd: number): number {
  if (sd <= 0) return Math.max(F - K, 0);
  const d1 = log(F / K) / sd + 0.5 * sd;
  return F * normCdf(d1) - K * normCdf(d1 - sd);
}

/** Options of {@link checkVolArbitrage}. */
export interface VolArbitrageOptions {
  /** Tolerance on total variance (default 1e-10). */
  varianceTol?: number;
  /** Tolerance on undiscounted call prices, relative to the forward (default 1e-10). */
  priceTol?: number;
}

/**
 * Static-arbitrage warnings on the quotes of a surface: calendar (total variance decreasing in T at fixed forward
 * moneyness, checked at each quote of the later row against the earlier row's interpolated variance) and
 * butterfly / vertical spread (undiscounted call prices per row not decreasing, slope below −1, or not convex in
 * strike). Each warning names the offending cell, e.g. `equities.ALDR.vols.vols[3][4]`.
 */
export function checkVolArbitrage(surface: VolSurface, options: VolArbitrageOptions = {}): FieldIssue[] {
  const vTol = options.varianceTol ?? 1e-10;
  const pTol = options.priceTol ?? 1e-10;
  const out: FieldIssue[] = [];
  const f = surface.field;
  const n = surface.expiries.length;
  for (let i = 0; i + 1 < n; i++) {
    const T0 = surface.expiries[i]!;
    const T1 = surface.expiries[i + 1]!;
    const strikes = surface.strikesAt(i + 1);
    const vols1 = surface.volsAt(i + 1);
    const F0 = surface.forward(T0);
    const F1 = surface.forward(T1);
    strikes.forEach((K, j) => {
      const w1 = vols1[j]! * vols1[j]! * T1;
      // Same forward moneyness on the earlier expiry: K' = K·F(T0)/F(T1).
      const w0 = surface.totalVariance(T0, (K * F0) / F1);
      if (w1 < w0 - vTol)
        out.push(
          issue(
            'W_CALENDAR_ARBITRAGE',
            `${f}.vols[${i + 1}][${j}]`,
            `must give total variance σ²T not below that of expiry ${T0} at the same forward moneyness (${w0.toPrecision(6)})`,
            vols1[j],
            `total variance ${w1.toPrecision(6)} at expiry ${T1} falls below the earlier expiry: calendar spreads would have negative value`,
            'warning',
          ),
        );
    });
  }
  for (let i = 0; i < n; i++) {
    const T = surface.expiries[i]!;
    const F = surface.forward(T);
    const Ks = surface.strikesAt(i);
    const vols = surface.volsAt(i);
    const C = Ks.map((K, j) => blackCallUndiscounted(F, K, vols[j]! * Math.sqrt(T)));
    const tol = pTol * F;
    for (let j = 1; j < Ks.length; j++) {
      const slope = (C[j]! - C[j - 1]!) / (Ks[j]! - Ks[j - 1]!);
      if (slope > tol / (Ks[j]! - Ks[j - 1]!) || slope < -1 - tol / (Ks[j]! - Ks[j - 1]!))
        out.push(
          issue(
            'W_BUTTERFLY_ARBITRAGE',
            `${f}.vols[${i}][${j}]`,
            'must give call prices decreasing in strike with slope in [−1, 0] (vertical spread)',
            vols[j],
            `call spread slope ${slope.toPrecision(6)} between strikes ${Ks[j - 1]} and ${Ks[j]} at expiry ${T}`,
            'warning',
          ),
        );
    }
    for (let j = 1; j + 1 < Ks.length; j++) {
      const sl = (C[j]! - C[j - 1]!) / (Ks[j]! - Ks[j - 1]!);
      const sr = (C[j + 1]! - C[j]!) / (Ks[j + 1]! - Ks[j]!);
      const scale = Math.min(Ks[j]! - Ks[j - 1]!, Ks[j + 1]! - Ks[j]!);
      if (sr < sl - tol / scale)
        out.push(
          issue(
            'W_BUTTERFLY_ARBITRAGE',
            `${f}.vols[${i}][${j}]`,
            'must give call prices convex in strike (butterfly spreads worth ≥ 0)',
            vols[j],
            `butterfly around strike ${Ks[j]} at expiry ${T} has negative value (slopes ${sl.toPrecision(6)} then ${sr.toPrecision(6)})`,
            'warning',
          ),
        );
    }
  }
  return out;
}
