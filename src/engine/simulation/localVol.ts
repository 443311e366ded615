/**
 * Local volatility σ(t, S) for the Dupire (1994) model, as used by the log-Euler scheme: a function that fills
 * `out[p] = σ(t, spot[p])` for a whole array of paths, so any surface (e.g. one calibrated elsewhere) can be plugged in.
 */
import { fail } from '../errors.ts';
import { bracketIndex } from '../math/search.ts';
import { log } from '../math/detMath.ts';

/** Fills `out[p]` with the local vol (per √year) at time `t` (years) and level `spot[p]`, for p < spot.length. */
export type LocalVolFunction = (t: number, spot: Float64Array, out: Float64Array) => void;

/** Grid form of a local-vol surface (the `localvol` dynamics of an equity). */
export interface LocalVolGrid {
  times: number[];
  /** Log-moneyness ln(K / F(t)). */
  logK: number[];
  /** values[i][j] at times[i], logK[j]. */
  values: number[][];
}

function bracket(xs: readonly number[], x: number): { i: number; w: number } {
  const n = xs.length;
  if (n === 1 || x <= xs[0]!) return { i: 0, w: 0 };
  if (x >= xs[n - 1]!) return { i: n - 2, w: 1 };
  const lo = bracketIndex(xs, x);
  return { i: lo, w: (x - xs[lo]!) / (xs[lo + 1]! - xs[lo]!) };
}

/**
 * Bilinear interpolation of the grid in (t, ln(S/F(t))), flat outside the grid (common practice). `forward(t)` is
 * the deterministic forward F(t) of the equity. Validates the grid naming `field`.
 */
export function makeGridLocalVol(
  grid: LocalVolGrid,
  forward: (t: number) => number,
  field: string,
): LocalVolFunction {
  const { times, logK, values } = grid;
  if (!Array.isArray(times) || times.length === 0)
    fail('E_LOCALVOL_GRID', `${field}.times`, 'must not be empty', times);
  if (!Array.isArray(logK) || logK.length === 0)
    fail('E_LOCALVOL_GRID', `${field}.logK`, 'must not be empty', logK);
  for (let i = 1; i < times.length; i++)
    if (!(times[i]! > times[i - 1]!))
      fail('E_NOT_INCREASING', `${field}.times[${i}]`, 'must increase', times[i]);
  for (let j = 1; j < logK.length; j++)
    if (!(logK[j]! > logK[j - 1]!)) fail('E_NOT_INCREASING', `${field}.logK[${j}]`, 'must increase', logK[j]);
  if (!Array.isArray(values) || values.length !== times.length)
    fail('E_LOCALVOL_GRID', `${field}.values`, `must have ${times.length} rows`, values?.length);
  values.forEach((row, i) => {
    if (!Array.isArray(row) || row.length !== logK.length)
      fail('E_LOCALVOL_GRID', `${field}.values[${i}]`, `must have ${logK.length} entries`, row?.length);
    row.forEach((v, j) => {
      if (!(Number.isFinite(v) && v > 0))
        fail('E_NOT_POSITIVE', `${field}.values[${i}][${j}]`, 'must be a finite vol > 0', v);
    });
  });
  const nK = logK.length;
  const flat = Float64Array.from(values.flat());
  const k0 = logK[0]!;
  const uniform =
    nK > 1 && logK.every((k, j) => Math.abs(k - (k0 + (j * (logK[nK - 1]! - k0)) / (nK - 1))) < 1e-12);
  const dk = nK > 1 ? (logK[nK - 1]! - k0) / (nK - 1) : 1;
  return (t, spot, out) => {
    const { i, w } = bracket(times, t);
    const i1 = Math.min(i + 1, times.length - 1);
    const lnF = log(forward(t));
    const r0 = i * nK;
    const r1 = i1 * nK;
    for (let p = 0; p < spot.length; p++) {
      const x = log(spot[p]!) - lnF;
      let j: number;
      let u: number;
      if (nK === 1 || x <= k0) {
        j = 0;
        u = 0;
      } else if (x >= logK[nK - 1]!) {
        j = nK - 2;
        u = 1;
      } else if (uniform) {
        const s = (x - k0) / dk;
        j = Math.min(nK - 2, Math.floor(s));
        u = s - j;
      } else {
        const b = bracket(logK, x);
        j = b.i;
        u = b.w;
      }
      const j1 = Math.min(j + 1, nK - 1);
      const a0 = flat[r0 + j]! + u * (flat[r0 + j1]! - flat[r0 + j]!);
      const a1 = flat[r1 + j]! + u * (flat[r1 + j1]! - flat[r1 + j]!);
      out[p] = a0 + w * (a1 - a0);
    }
  };
}
