/**
 * European vanillas on one expiry from any log-characteristic function by the COS method
 * (F. Fang, C.W. Oosterlee, "A novel pricing method for European options based on Fourier-cosine series
 * expansions", SIAM J. Sci. Comput. 31(2), 2008: eq. (19) for the price, (22)–(23) for χ_k and ψ_k,
 * (29) for the put coefficients U_k; truncation range (49) with cumulants c1, c2).
 *
 * Why a second COS pricer beside models/hestonCos.ts: that one is Heston-specific (closed-form cumulants, adaptive
 * number of terms, Greeks). The calibration needs (a) any characteristic function (Heston, H1-HW, Heston under
 * shifted rates) behind one `LogCharFn` shape and (b) a truncation range fixed per quote slice from the market, so
 * the payoff coefficients U_k of every strike are computed once and each residual evaluation of the optimiser only
 * evaluates the characteristic function. The Heston characteristic function itself is the models layer's.
 */

/**
 * Log of the characteristic function of y = ln(S_T / F_0) under the T-forward measure, at real u.
 * Writes the real part into out[0] and the imaginary part into out[1].
 */
import { cos, exp, log, sin } from '../math/detMath.ts';
export type LogCharFn = (u: number, out: Float64Array) => void;

export interface CosSliceInput {
  logChf: LogCharFn;
  /** Forward F(0,T) of the underlying in its currency. */
  forward: number;
  /** Discount factor P(0,T) to expiry. */
  df: number;
  /** Absolute strikes. */
  strikes: readonly number[];
  /** Number of cosine terms (default 256). */
  terms?: number;
  /** Truncation half-width in standard deviations of y (default 16). */
  width?: number;
}

/**
 * First two cumulants of y from the log-characteristic function by central differences at 0
 * (log φ(0) = 0): c1 = Im[log φ(h) − log φ(−h)]/(2h), c2 = −Re[log φ(h) + log φ(−h)]/h². Common practice.
 */
export function cumulantsFromLogChf(logChf: LogCharFn): { c1: number; c2: number } {
  const h = 1e-3;
  const p = new Float64Array(2);
  const m = new Float64Array(2);
  logChf(h, p);
  logChf(-h, m);
  return { c1: (p[1]! - m[1]!) / (2 * h), c2: -(p[0]! + m[0]!) / (h * h) };
}

/**
 * Call prices (discounted by `df`) for every strike of the slice, on the range c1 ± width·√c2 from the cumulants of
 * the characteristic function: a {@link prepareCosSlice} on that range, priced once.
 */
export function cosCallPrices(input: CosSliceInput): number[] {
  const L = input.width ?? 16;
  const { c1, c2 } = cumulantsFromLogChf(input.logChf);
  const sd = Math.sqrt(Math.max(c2, 1e-12));
  return prepareCosSlice({
    forward: input.forward,
    df: input.df,
    strikes: input.strikes,
    lo: c1 - L * sd, // a − x, the same for every strike
    width: 2 * L * sd, // b − a
    terms: input.terms ?? 256,
  }).callPrices(input.logChf);
}

/**
 * A COS slice whose truncation range is fixed in advance (not from the model's cumulants), so the payoff
 * coefficients U_k of every strike are computed once and each pricing only evaluates the characteristic function
 * (Fang & Oosterlee 2008, eq. (19) with the same [a, b] for every parameter set of a calibration).
 */
export interface PreparedCosSlice {
  /** Call prices (discounted) for the slice's strikes under the characteristic function. */
  callPrices(logChf: LogCharFn): number[];
  /**
   * The same prices from a characteristic function evaluated on blocks of frequencies at once (one call per block of
   * 32 terms instead of one per term); the same terms, stop rule and arithmetic per term as `callPrices`.
   */
  callPricesOnGrid(logChfGrid: LogCharFnGrid): number[];
  /**
   * The prices of `callPricesOnGrid` with their gradient with respect to the parameters of the characteristic
   * function, from ∂ln φ/∂p_k on the same blocks: ∂φ/∂p = φ·∂ln φ/∂p, so each term adds Re[∂ln φ/∂p_k · φ e^{−iu·lo}]
   * U_k (Fang & Oosterlee 2008, eq. (19) differentiated term by term). The terms and the stop rule are those of the
   * prices, so this is the exact gradient of the truncated series the prices come from.
   */
  callPricesWithGradientOnGrid(gradGrid: LogCharFnGradientGrid, nParams: number): SliceWithGradient;
}

/**
 * ln φ and its gradient on a grid of real u: Re/Im of ln φ(u[j]) into re[j], im[j], and of ∂ln φ(u[j])/∂p_k into
 * gRe[k][j], gIm[k][j] for every parameter k.
 */
export type LogCharFnGradientGrid = (
  u: Float64Array,
  re: Float64Array,
  im: Float64Array,
  gRe: Float64Array[],
  gIm: Float64Array[],
) => void;

/** Call prices of a slice with ∂price/∂p_k: `gradient[j][k]` for strike j and parameter k. */
export interface SliceWithGradient {
  prices: number[];
  gradient: number[][];
}

/** ln φ on a grid of real u: writes Re and Im of ln φ(u[j]) into re[j], im[j] for every j < u.length. */
export type LogCharFnGrid = (u: Float64Array, re: Float64Array, im: Float64Array) => void;

/**
 * Prepares a slice with range ln(S_T/F) ∈ [lo, lo + width]. A calibration takes lo = −½σ̄²T − L·σ_max√T and
 * width = 2L·σ_max√T (L = 12) from the market vols of the slice (common practice), wide enough for a model fitting them.
 */
export function prepareCosSlice(o: {
  forward: number;
  df: number;
  strikes: readonly number[];
  lo: number;
  width: number;
  terms?: number;
}): PreparedCosSlice {
  const N = o.terms ?? 256;
  const { forward: F, df, lo, width } = o;
  const w = Math.PI / width;
  const nK = o.strikes.length;
  // U[k * nK + j]: put coefficient of strike j at term k (eq. 29), halved at k = 0.
  const U = new Float64Array(N * nK);
  o.strikes.forEach((K, j) => {
    const a = log(F / K) + lo;
    const ea = exp(a);
    // cos/sin(kωa) by the rotation recurrence (angle addition), one cos/sin pair per strike.
    const ct = cos(w * a);
    const st = sin(w * a);
    let c = 1;
    let sn = 0;
    for (let k = 0; k < N; k++) {
      const wk = k * w;
      let chi: number;
      let psi: number;
      if (k === 0) {
        chi = 1 - ea;
        psi = -a;
      } else {
        const cn = c * ct - sn * st;
        sn = sn * ct + c * st;
        c = cn;
        chi = (c - ea - wk * sn) / (1 + wk * wk);
        psi = -sn / wk;
      }
      U[k * nK + j] = (2 / width) * (psi - chi) * (k === 0 ? 0.5 : 1);
    }
  });
  const out = new Float64Array(2);
  const sums = new Float64Array(nK);
  const BLOCK = 32;
  const uBlock = new Float64Array(BLOCK);
  const reBlock = new Float64Array(BLOCK);
  const imBlock = new Float64Array(BLOCK);
  let gSums: Float64Array[] = [];
  let gReB: Float64Array[] = [];
  let gImB: Float64Array[] = [];
  return {
    callPricesWithGradientOnGrid(gradGrid, nParams) {
      if (gSums.length !== nParams) {
        gSums = Array.from({ length: nParams }, () => new Float64Array(nK));
        gReB = Array.from({ length: nParams }, () => new Float64Array(BLOCK));
        gImB = Array.from({ length: nParams }, () => new Float64Array(BLOCK));
      }
      sums.fill(0);
      for (const g of gSums) g.fill(0);
      let prevMag = Infinity;
      let tiny = 0;
      outer: for (let k0 = 0; k0 < N; k0 += BLOCK) {
        const len = Math.min(BLOCK, N - k0);
        const ub = len === BLOCK ? uBlock : uBlock.subarray(0, len);
        for (let j = 0; j < len; j++) ub[j] = (k0 + j) * w;
        gradGrid(ub, reBlock, imBlock, gReB, gImB);
        for (let j = 0; j < len; j++) {
          const k = k0 + j;
          const u = ub[j]!;
          const mag = exp(reBlock[j]!);
          // Stop rule of callPrices (see there).
          if (k > 0 && (mag > 1 + 1e-9 || (mag > prevMag * (1 + 1e-9) && mag < 0.5))) break outer;
          prevMag = mag;
          const ph = imBlock[j]! - u * lo;
          const re = mag * cos(ph);
          const im = mag * sin(ph);
          const row = k * nK;
          for (let i = 0; i < nK; i++) sums[i] += re * U[row + i]!;
          for (let q = 0; q < nParams; q++) {
            const c = gReB[q]![j]! * re - gImB[q]![j]! * im;
            const gs = gSums[q]!;
            for (let i = 0; i < nK; i++) gs[i] += c * U[row + i]!;
          }
          if (mag < 1e-16) {
            if (++tiny >= 3) break outer;
          } else tiny = 0;
        }
      }
      const prices = finish();
      // d/dp [max(df·K·Σ, 0) + df(F − K)] = df·K·∂Σ/∂p where Σ > 0, else 0.
      const gradient = o.strikes.map((K, i) =>
        gSums.map((g) => (df * K * sums[i]! > 0 ? df * K * g[i]! : 0)),
      );
      return { prices, gradient };
    },
    callPricesOnGrid(logChfGrid) {
      sums.fill(0);
      let prevMag = Infinity;
      let tiny = 0;
      for (let k0 = 0; k0 < N; k0 += BLOCK) {
        const len = Math.min(BLOCK, N - k0);
        const ub = len === BLOCK ? uBlock : uBlock.subarray(0, len);
        for (let j = 0; j < len; j++) ub[j] = (k0 + j) * w;
        logChfGrid(ub, reBlock, imBlock);
        for (let j = 0; j < len; j++) {
          const k = k0 + j;
          const u = ub[j]!;
          const mag = exp(reBlock[j]!);
          // Stop rule of callPrices (see there).
          if (k > 0 && (mag > 1 + 1e-9 || (mag > prevMag * (1 + 1e-9) && mag < 0.5))) return finish();
          prevMag = mag;
          const re = mag * cos(imBlock[j]! - u * lo);
          const row = k * nK;
          for (let i = 0; i < nK; i++) sums[i] += re * U[row + i]!;
          if (mag < 1e-16) {
            if (++tiny >= 3) return finish();
          } else tiny = 0;
        }
      }
      return finish();
    },
    callPrices(logChf) {
      sums.fill(0);
      let prevMag = Infinity;
      let tiny = 0;
      for (let k = 0; k < N; k++) {
        const u = k * w;
        logChf(u, out);
        const mag = exp(out[0]!);
        // The series stops where |φ| has become negligible (< 1e-16 three times in a row), and where it would grow
        // again (|φ| > 1, or rising after having fallen): a true characteristic function never exceeds 1, so growth
        // means an approximate one (e.g. H1-HW with ρ(S,r) < 0, whose Gaussian factor has negative variance) has left
        // the range where it approximates anything (common practice: truncate the Fourier integral there).
        if (k > 0 && (mag > 1 + 1e-9 || (mag > prevMag * (1 + 1e-9) && mag < 0.5))) break;
        prevMag = mag;
        const re = mag * cos(out[1]! - u * lo);
        const row = k * nK;
        for (let j = 0; j < nK; j++) sums[j] += re * U[row + j]!;
        if (mag < 1e-16) {
          if (++tiny >= 3) break;
        } else tiny = 0;
      }
      return finish();
    },
  };
  function finish(): number[] {
    return o.strikes.map((K, j) => Math.max(df * K * sums[j]!, 0) + df * (F - K));
  }
}

/** Call prices of a slice on an explicit range with as many terms as the characteristic function needs. */
export interface AdaptiveCosSlice {
  /** Call prices (discounted) for the slice's strikes. */
  prices: number[];
  /** Cosine terms used. */
  terms: number;
  /** Whether the term bound fell below the tolerance before `maxTerms` (or the function left its valid range). */
  converged: boolean;
}

/**
 * COS call prices on the range ln(S_T/F) ∈ [lo, lo + width] (Fang & Oosterlee 2008, eq. (19) with the put
 * coefficients of eqs. (22)–(23), calls by parity) with the number of terms chosen from the characteristic function:
 * term k contributes at most df·K_max·(2/width)·|φ(u_k)|·|ψ_k − χ_k| ≤ 6·df·K_max·|φ(u_k)|/(kπ) (|ψ_k|, |χ_k| ≤ 1/ω_k
 * + 1/(1 + ω_k²) on a put coefficient), and the series stops once that bound is below tol/5 for 4 consecutive k
 * (common practice), or where |φ| grows again (an approximate characteristic function outside its range, as in
 * {@link prepareCosSlice}). The range is the caller's: the calibration's check of its fixed-range slices takes it
 * from the fitted model's own cumulants. Per strike, cos/sin(ω_k(c − a)) come from one rotation recurrence.
 */
export function cosCallPricesAdaptive(o: {
  /** ln φ on blocks of frequencies (evaluated 32 at a time; terms past the stop are discarded). */
  logChfGrid: LogCharFnGrid;
  forward: number;
  df: number;
  strikes: readonly number[];
  lo: number;
  width: number;
  /** Absolute price tolerance (discounted, currency units). */
  tol: number;
  /** Cap on the number of terms (default 16384). */
  maxTerms?: number;
}): AdaptiveCosSlice {
  const { logChfGrid, forward: F, df, strikes, lo, width, tol } = o;
  const maxTerms = o.maxTerms ?? 16384;
  const kMax = Math.max(...strikes);
  const w = Math.PI / width;
  const BLOCK = 32;
  let A = new Float64Array(256);
  const ub = new Float64Array(BLOCK);
  const re = new Float64Array(BLOCK);
  const im = new Float64Array(BLOCK);
  let n = 0;
  let quiet = 0;
  let converged = false;
  let prevMag = Infinity;
  const bound = (6 * df * kMax) / Math.PI;
  blocks: while (n < maxTerms) {
    const k0 = n;
    for (let j = 0; j < BLOCK; j++) ub[j] = (k0 + j) * w;
    logChfGrid(ub, re, im);
    for (let j = 0; j < BLOCK && n < maxTerms; j++) {
      const u = ub[j]!;
      const mag = exp(re[j]!);
      if (n > 0 && (mag > 1 + 1e-9 || (mag > prevMag * (1 + 1e-9) && mag < 0.5))) {
        converged = true;
        break blocks;
      }
      prevMag = mag;
      if (n >= A.length) {
        const g = new Float64Array(2 * A.length);
        g.set(A);
        A = g;
      }
      // (2/width) Re[φ(u_k) e^{−iu_k lo}], halved at k = 0
      A[n] = (2 / width) * mag * cos(im[j]! - u * lo) * (n === 0 ? 0.5 : 1);
      n++;
      if (n > 1) {
        quiet = (bound * mag) / (n - 1) < tol / 5 ? quiet + 1 : 0;
        if (quiet >= 4) {
          converged = true;
          break blocks;
        }
      }
    }
  }
  const prices = strikes.map((K) => {
    // Put on [a, 0] in y = ln(S_T/K): a = ln(F/K) + lo, payoff K(1 − e^y).
    const a = log(F / K) + lo;
    if (a >= 0) return df * (F - K) > 0 ? df * (F - K) : 0;
    const ea = exp(a);
    const th = -w * a;
    const ct = cos(th);
    const st = sin(th);
    let ck = 1;
    let sk = 0;
    let put = A[0]! * (-a - (1 - ea));
    for (let k = 1; k < n; k++) {
      const cn = ck * ct - sk * st;
      sk = sk * ct + ck * st;
      ck = cn;
      const wk = k * w;
      // ψ_k = sin(ω(0 − a))/ω, χ_k = [cos(ω(0 − a)) − e^a + ω sin(ω(0 − a))]/(1 + ω²)  (eqs. (22)–(23))
      const psi = sk / wk;
      const chi = (ck - ea + wk * sk) / (1 + wk * wk);
      put += A[k]! * (psi - chi);
    }
    return Math.max(df * K * put, 0) + df * (F - K);
  });
  return { prices, terms: n, converged };
}
