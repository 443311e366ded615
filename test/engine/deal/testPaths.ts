/**
 * Hand-built path batches for the deal tests, independent of the simulation layer:
 *  - equities: exact lognormal steps under flat deterministic rates (geometric Brownian motion sampled exactly on
 *    the grid: S(t+Δ) = S(t) exp((r − q − σ²/2)Δ + σ√Δ Z), Glasserman 2004, Sec. 3.2.1, eq. (3.8)); correlated
 *    equities/FX through a 2×2 Cholesky; foreign equities get the quanto drift −ρσ_Sσ_X (common practice);
 *  - domestic Hull–White short rate on a flat curve: (x, ∫x) simulated exactly as a joint Gaussian (Glasserman
 *    2004, Sec. 3.3.2, eqs. (3.46)–(3.48)), r = x + α, α(t) = f(0,t) + σ²(1 − e^{−at})²/(2a²), bonds by
 *    Brigo & Mercurio (2006) eq. (3.39).
 */
import { makeNormalSource, makeUniformStream } from '../../../src/engine/random/index.ts';
import type { PathBatch } from '../../../src/engine/simulation/types.ts';

export interface TestEquity {
  name: string;
  spot: number;
  vol: number;
  divYield: number;
  /** Rate of the equity's currency (flat, continuous). Default: the domestic rate. */
  rate?: number;
  /** For a foreign equity: correlation with the FX driver, giving the quanto drift under the domestic measure. */
  quanto?: { fxVol: number; rho: number };
}

export interface TestFx {
  /** Batch key `FOREIGN/DOMESTIC` (domestic per foreign). */
  name: string;
  spot: number;
  vol: number;
  domRate: number;
  forRate: number;
}

export interface TestBatchSpec {
  nPaths: number;
  times: number[];
  seed: string;
  domestic: string;
  /** Flat continuous domestic rate. */
  rate: number;
  equities?: TestEquity[];
  fx?: TestFx[];
  /** Other currencies with flat deterministic rates. */
  foreignRates?: Record<string, number>;
  /** Hull–White on the domestic curve. */
  hw?: { a: number; sigma: number };
}

export function makeTestBatch(spec: TestBatchSpec): PathBatch {
  const n = spec.nPaths;
  const times = Float64Array.from(spec.times[0] === 0 ? spec.times : [0, ...spec.times]);
  const K = times.length;
  const src = makeNormalSource(makeUniformStream(spec.seed));
  const z = new Float64Array(n);
  const equity: Record<string, Float64Array> = {};
  const fx: Record<string, Float64Array> = {};
  for (const f of spec.fx ?? []) {
    const a = new Float64Array(K * n);
    a.fill(f.spot, 0, n);
    for (let k = 1; k < K; k++) {
      const dt = times[k]! - times[k - 1]!;
      src.fill(z, 0, n);
      const mu = (f.domRate - f.forRate - 0.5 * f.vol * f.vol) * dt;
      const sd = f.vol * Math.sqrt(dt);
      for (let p = 0; p < n; p++) a[k * n + p] = a[(k - 1) * n + p]! * Math.exp(mu + sd * z[p]!);
    }
    fx[f.name] = a;
  }
  for (const e of spec.equities ?? []) {
    const a = new Float64Array(K * n);
    a.fill(e.spot, 0, n);
    const r = e.rate ?? spec.rate;
    const drift = r - e.divYield - (e.quanto ? e.quanto.rho * e.vol * e.quanto.fxVol : 0);
    for (let k = 1; k < K; k++) {
      const dt = times[k]! - times[k - 1]!;
      src.fill(z, 0, n);
      const mu = (drift - 0.5 * e.vol * e.vol) * dt;
      const sd = e.vol * Math.sqrt(dt);
      for (let p = 0; p < n; p++) a[k * n + p] = a[(k - 1) * n + p]! * Math.exp(mu + sd * z[p]!);
    }
    equity[e.name] = a;
  }
  const r0 = spec.rate;
  const shortRate: Record<string, Float64Array> = {};
  const discount = new Float64Array(K * n);
  let bond: PathBatch['bond'];
  if (!spec.hw) {
    shortRate[spec.domestic] = new Float64Array(K * n).fill(r0);
    for (let k = 0; k < K; k++) discount.fill(Math.exp(-r0 * times[k]!), k * n, (k + 1) * n);
    bond = (ccy, k, T, out) => {
      const rr = ccy === spec.domestic ? r0 : spec.foreignRates?.[ccy];
      if (rr === undefined) throw new Error(`no rate for ${ccy}`);
      out.fill(Math.exp(-rr * (T - times[k]!)), 0, n);
    };
  } else {
    const { a, sigma } = spec.hw;
    const x = new Float64Array(K * n);
    const intX = new Float64Array(K * n);
    const z2 = new Float64Array(n);
    for (let k = 1; k < K; k++) {
      const d = times[k]! - times[k - 1]!;
      const e1 = Math.exp(-a * d);
      const e2 = Math.exp(-2 * a * d);
      const vx = ((sigma * sigma) / (2 * a)) * (1 - e2);
      const vy = ((sigma * sigma) / (a * a)) * (d + (1 - e2) / (2 * a) - (2 * (1 - e1)) / a);
      const cxy = ((sigma * sigma) / (2 * a * a)) * (1 - 2 * e1 + e2);
      const sx = Math.sqrt(vx);
      const rho = cxy / (sx * Math.sqrt(vy));
      const sy = Math.sqrt(vy);
      src.fill(z, 0, n);
      src.fill(z2, 0, n);
      for (let p = 0; p < n; p++) {
        const xp = x[(k - 1) * n + p]!;
        x[k * n + p] = xp * e1 + sx * z[p]!;
        const y = (xp * (1 - e1)) / a + sy * (rho * z[p]! + Math.sqrt(1 - rho * rho) * z2[p]!);
        intX[k * n + p] = intX[(k - 1) * n + p]! + y;
      }
    }
    const alpha = (t: number) => r0 + ((sigma * sigma) / (2 * a * a)) * (1 - Math.exp(-a * t)) ** 2;
    // ∫_0^t α(u) du = r0 t + σ²/(2a²) [t − 2(1 − e^{−at})/a + (1 − e^{−2at})/(2a)]
    const intAlpha = (t: number) =>
      r0 * t +
      ((sigma * sigma) / (2 * a * a)) *
        (t - (2 * (1 - Math.exp(-a * t))) / a + (1 - Math.exp(-2 * a * t)) / (2 * a));
    const r = new Float64Array(K * n);
    for (let k = 0; k < K; k++) {
      const t = times[k]!;
      const al = alpha(t);
      const ia = intAlpha(t);
      for (let p = 0; p < n; p++) {
        r[k * n + p] = x[k * n + p]! + al;
        discount[k * n + p] = Math.exp(-ia - intX[k * n + p]!);
      }
    }
    shortRate[spec.domestic] = r;
    bond = (ccy, k, T, out) => {
      const t = times[k]!;
      if (ccy !== spec.domestic) {
        const rr = spec.foreignRates?.[ccy];
        if (rr === undefined) throw new Error(`no rate for ${ccy}`);
        out.fill(Math.exp(-rr * (T - t)), 0, n);
        return;
      }
      // Brigo & Mercurio (2006) eq. (3.39) on a flat curve (f(0,t) = r0).
      const B = (1 - Math.exp(-a * (T - t))) / a;
      const A = Math.exp(
        -r0 * (T - t) + B * r0 - ((sigma * sigma) / (4 * a)) * (1 - Math.exp(-2 * a * t)) * B * B,
      );
      for (let p = 0; p < n; p++) out[p] = A * Math.exp(-B * r[k * n + p]!);
    };
  }
  for (const [ccy, rr] of Object.entries(spec.foreignRates ?? {}))
    if (!shortRate[ccy]) shortRate[ccy] = new Float64Array(K * n).fill(rr);
  return { nPaths: n, times, equity, variance: {}, fx, shortRate, discount, bond };
}

/** Mean and standard error of per-path values. */
export function meanSe(v: Float64Array): { mean: number; se: number } {
  let s = 0;
  let s2 = 0;
  for (let i = 0; i < v.length; i++) {
    s += v[i]!;
    s2 += v[i]! * v[i]!;
  }
  const m = s / v.length;
  return { mean: m, se: Math.sqrt(Math.max(0, s2 / v.length - m * m) / (v.length - 1)) };
}
