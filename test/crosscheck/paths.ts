/**
 * Shared pieces of the cross-layer checks without the test runner (usable from scripts too): the demo market as an
 * input (never an oracle), direct path simulation of one variant with seeded normals, sample means with standard
 * errors, control variates.
 */
import { readFileSync } from 'node:fs';
import type { MarketSnapshot } from '../../src/engine/market/types.ts';
import type { PathBatch, VariantSpec } from '../../src/engine/simulation/types.ts';
import { makeTimeGrid, type TimeGrid } from '../../src/engine/simulation/timeGrid.ts';
import { makeDriverLayout } from '../../src/engine/simulation/drivers.ts';
import {
  modelBreakTimes,
  normalsBlockSize,
  prepareVariant,
} from '../../src/engine/simulation/pathGenerator.ts';
import { makeNormalSource, makeUniformStream } from '../../src/engine/random/index.ts';

export const FULL = process.env.FT_PROFILE === 'full';

const root = new URL('../../', import.meta.url);

/** Reads a JSON file of the repository (relative to its root). */
export function readJson<T>(path: string): T {
  return JSON.parse(readFileSync(new URL(path, root), 'utf8')) as T;
}

/** The invented demo snapshot (an input of the checks; expected values always come from formulas). */
export function demoMarket(): MarketSnapshot {
  return readJson<MarketSnapshot>('samples/market/demo-market.json');
}

/** Running mean and standard error of a stream of per-path values. */
export class MeanSe {
  private n = 0;
  private mean = 0;
  private m2 = 0;
  /** Welford's one-pass update (Welford 1962, Technometrics 4(3); common practice). */
  add(x: number): void {
    this.n++;
    const d = x - this.mean;
    this.mean += d / this.n;
    this.m2 += d * (x - this.mean);
  }
  get count(): number {
    return this.n;
  }
  get value(): number {
    return this.mean;
  }
  get se(): number {
    return this.n > 1 ? Math.sqrt(this.m2 / (this.n - 1) / this.n) : Infinity;
  }
}

/**
 * Simulates `nPaths` paths of one variant directly through the path generator, in chunks, with seeded normals
 * (seedrandom xor4096 through the project's inverse-normal source), and hands each chunk to `visit`.
 */
export function simulateChunks(args: {
  variant: VariantSpec;
  eventTimes: number[];
  maxStep: number;
  nPaths: number;
  seed: string;
  chunk?: number;
  visit: (batch: PathBatch, grid: TimeGrid) => void;
}): TimeGrid {
  const grid = makeTimeGrid(args.eventTimes, args.maxStep, modelBreakTimes([args.variant]));
  const layout = makeDriverLayout([args.variant]);
  const prepared = prepareVariant(args.variant, grid, layout);
  const chunk = args.chunk ?? 8192;
  let done = 0;
  let c = 0;
  while (done < args.nPaths) {
    const n = Math.min(chunk, args.nPaths - done);
    const normals = new Float64Array(normalsBlockSize(grid, layout, n));
    makeNormalSource(makeUniformStream(`${args.seed}:${c}`)).fill(normals, 0, normals.length);
    args.visit(prepared.simulate(normals, n), grid);
    done += n;
    c++;
  }
  return grid;
}

/**
 * Control-variate estimate of E[y] with controls of known means, β by least squares on the same paths
 * (Glasserman 2003, "Monte Carlo Methods in Financial Engineering", Sec. 4.1.2, multiple controls). The SE is the
 * residual standard deviation over √n (the β-estimation effect is O(1/n); common practice).
 */
export function controlVariateEstimate(
  y: ArrayLike<number>,
  controls: ArrayLike<number>[],
  known: number[],
): { value: number; se: number; plainValue: number; plainSe: number } {
  const n = y.length;
  const m = controls.length;
  const mean = (a: ArrayLike<number>) => {
    let s = 0;
    for (let i = 0; i < n; i++) s += a[i]!;
    return s / n;
  };
  const my = mean(y);
  const mc = controls.map(mean);
  // Normal equations S β = c with S = Cov(controls), c = Cov(controls, y).
  const S = Array.from({ length: m }, () => new Array<number>(m).fill(0));
  const c = new Array<number>(m).fill(0);
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dy = y[i]! - my;
    syy += dy * dy;
    for (let a = 0; a < m; a++) {
      const da = controls[a]![i]! - mc[a]!;
      c[a] += da * dy;
      for (let b = 0; b <= a; b++) S[a]![b] += da * (controls[b]![i]! - mc[b]!);
    }
  }
  for (let a = 0; a < m; a++) for (let b = 0; b < a; b++) S[b]![a] = S[a]![b]!;
  // Gaussian elimination (m is 1 or 2 here).
  const A = S.map((row, i) => [...row, c[i]!]);
  for (let p = 0; p < m; p++) {
    for (let r = p + 1; r < m; r++) {
      const f = A[r]![p]! / A[p]![p]!;
      for (let q = p; q <= m; q++) A[r]![q] -= f * A[p]![q]!;
    }
  }
  const beta = new Array<number>(m).fill(0);
  for (let p = m - 1; p >= 0; p--) {
    let s = A[p]![m]!;
    for (let q = p + 1; q < m; q++) s -= A[p]![q]! * beta[q]!;
    beta[p] = s / A[p]![p]!;
  }
  let value = my;
  for (let a = 0; a < m; a++) value -= beta[a]! * (mc[a]! - known[a]!);
  let sr = 0;
  for (let i = 0; i < n; i++) {
    let e = y[i]! - my;
    for (let a = 0; a < m; a++) e -= beta[a]! * (controls[a]![i]! - mc[a]!);
    sr += e * e;
  }
  return {
    value,
    se: Math.sqrt(sr / (n - m - 1) / n),
    plainValue: my,
    plainSe: Math.sqrt(syy / (n - 1) / n),
  };
}
