import { describe, it, expect } from 'vitest';
import {
  equallySpacedTimes,
  lognormalBermudanSource,
  priceExerciseRight,
  pricePolicy,
  meanAndSe,
} from '../../../src/engine/exercise/index.ts';
import type { ExercisePolicy } from '../../../src/engine/exercise/index.ts';
import { bsPrice } from '../../../src/engine/models/blackScholes.ts';

const full = process.env.FT_PROFILE === 'full';

/**
 * Longstaff & Schwartz (2001), 'Valuing American options by simulation: a simple least-squares approach', RFS 14(1),
 * Table 1: American put, K = 40, r = 0.06, 50 exercise dates per year; columns: finite-difference American value,
 * closed-form European value, simulated (LSM) American value and its standard error (100,000 paths, 50,000 plus
 * antithetics). All values from memory (the European column is re-checked below by the closed form).
 */
const TABLE_1: { S: number; vol: number; T: number; fd: number; eu: number; lsm: number; se: number }[] = [
  { S: 36, vol: 0.2, T: 1, fd: 4.478, eu: 3.844, lsm: 4.472, se: 0.01 },
  { S: 36, vol: 0.2, T: 2, fd: 4.84, eu: 3.763, lsm: 4.821, se: 0.012 },
  { S: 36, vol: 0.4, T: 1, fd: 7.101, eu: 6.711, lsm: 7.091, se: 0.02 },
  { S: 36, vol: 0.4, T: 2, fd: 8.508, eu: 7.7, lsm: 8.488, se: 0.024 },
  { S: 38, vol: 0.2, T: 1, fd: 3.25, eu: 2.852, lsm: 3.244, se: 0.009 },
  { S: 38, vol: 0.2, T: 2, fd: 3.745, eu: 2.991, lsm: 3.735, se: 0.011 },
  { S: 38, vol: 0.4, T: 1, fd: 6.148, eu: 5.834, lsm: 6.139, se: 0.019 },
  { S: 38, vol: 0.4, T: 2, fd: 7.67, eu: 6.979, lsm: 7.669, se: 0.022 },
  { S: 40, vol: 0.2, T: 1, fd: 2.314, eu: 2.066, lsm: 2.313, se: 0.009 },
  { S: 40, vol: 0.2, T: 2, fd: 2.885, eu: 2.356, lsm: 2.879, se: 0.01 },
  { S: 40, vol: 0.4, T: 1, fd: 5.312, eu: 5.06, lsm: 5.308, se: 0.018 },
  { S: 40, vol: 0.4, T: 2, fd: 6.92, eu: 6.326, lsm: 6.921, se: 0.022 },
  { S: 42, vol: 0.2, T: 1, fd: 1.617, eu: 1.465, lsm: 1.617, se: 0.007 },
  { S: 42, vol: 0.2, T: 2, fd: 2.212, eu: 1.841, lsm: 2.206, se: 0.01 },
  { S: 42, vol: 0.4, T: 1, fd: 4.582, eu: 4.379, lsm: 4.588, se: 0.017 },
  { S: 42, vol: 0.4, T: 2, fd: 6.248, eu: 5.736, lsm: 6.243, se: 0.021 },
  { S: 44, vol: 0.2, T: 1, fd: 1.11, eu: 1.017, lsm: 1.118, se: 0.007 },
  { S: 44, vol: 0.2, T: 2, fd: 1.69, eu: 1.429, lsm: 1.675, se: 0.009 },
  { S: 44, vol: 0.4, T: 1, fd: 3.948, eu: 3.783, lsm: 3.957, se: 0.017 },
  { S: 44, vol: 0.4, T: 2, fd: 5.647, eu: 5.202, lsm: 5.622, se: 0.021 },
];

/** Rows run in the fast profile (all rows in the full profile). */
const FAST_ROWS = [0, 6, 8, 11, 16];
const rows = full ? TABLE_1 : FAST_ROWS.map((i) => TABLE_1[i]!);
const paths = full
  ? { regressionPaths: 100_000, pricingPaths: 200_000 }
  : { regressionPaths: 20_000, pricingPaths: 40_000 };
/**
 * Gap allowed between the LSM (Bermudan, 50 dates a year, estimated policy) and the finite-difference American value:
 * the 'difference' column of Table 1 reaches 0.025 (from memory); we allow 0.03 beyond the Monte Carlo error.
 */
const BERMUDAN_GAP = 0.03;

function source(S: number, vol: number, T: number) {
  return lognormalBermudanSource({
    type: 'put',
    spot: S,
    strike: 40,
    rate: 0.06,
    vol,
    exerciseTimes: equallySpacedTimes(T, 50 * T),
  });
}

describe('Bermudan put under Black–Scholes by Longstaff–Schwartz', () => {
  it('the European column of Longstaff & Schwartz (2001) Table 1 is the Black–Scholes closed form (checks the transcription)', () => {
    for (const r of TABLE_1) {
      const eu = bsPrice({ type: 'put', S: r.S, K: 40, T: r.T, r: 0.06, q: 0, vol: r.vol });
      expect(
        Math.abs(eu - r.eu),
        `S=${r.S} vol=${r.vol} T=${r.T}: table ${r.eu}, closed form ${eu}`,
      ).toBeLessThan(0.0006);
    }
  });

  for (const r of rows) {
    it(`S=${r.S}, σ=${r.vol}, T=${r.T}: matches the LSM value of Table 1 within 3 combined SE and stays below the FD American value`, () => {
      // Basis: degree-3 polynomial in the standardised spot (4 functions), the size of the paper's basis (constant
      // plus three weighted Laguerre polynomials; from memory), on in-the-money paths only.
      const res = priceExerciseRight(source(r.S, r.vol, r.T), { seed: 2001, degree: 3, ...paths });
      const { value, se } = res.estimate.primal;
      const tol = 3 * Math.sqrt(se * se + r.se * r.se);
      const info = `S=${r.S} vol=${r.vol} T=${r.T}: LSM ${value.toFixed(4)} ± ${se.toFixed(4)}, table LSM ${r.lsm} ± ${r.se}, FD ${r.fd}`;
      expect(se, `${info}: SE cap`).toBeLessThan(full ? 0.02 : 0.04);
      expect(Math.abs(value - r.lsm), `${info}: tolerance ${tol.toFixed(4)}`).toBeLessThan(tol);
      // Lower-bound property (Longstaff & Schwartz 2001, their lower-bound result, from memory) and Bermudan ≤ American.
      expect(value - 3 * se, `${info}: lower bound`).toBeLessThan(r.fd);
      expect(value + 3 * se + BERMUDAN_GAP, `${info}: distance to FD`).toBeGreaterThan(r.fd);
      // Above the European value (early exercise is worth something for a put with r > 0).
      expect(value - 3 * se, info).toBeGreaterThan(r.eu);
    });
  }

  it('reports exercise probabilities that sum with the never-exercised share to one', () => {
    const res = priceExerciseRight(source(36, 0.2, 1), {
      seed: 5,
      degree: 2,
      regressionPaths: 5000,
      pricingPaths: 5000,
    });
    const p = res.estimate.exerciseProbability.reduce((s, d) => s + d.probability, 0);
    expect(Math.abs(p + res.estimate.neverExercised - 1)).toBeLessThan(1e-12);
    expect(res.estimate.exerciseProbability).toHaveLength(50);
    expect(res.estimate.biasNote).toMatch(/biased low/);
  });

  it('the dual bound lies above the policy estimate and, within its error, above the published LSM value', () => {
    // Andersen & Broadie (2004), Sec. 2: the dual value is an upper bound of the Bermudan value, which is at least
    // the expected LSM estimate (Longstaff & Schwartz 2001, Table 1, S=36, σ=0.2, T=1: 4.472, s.e. 0.010, from memory).
    const res = priceExerciseRight(source(36, 0.2, 1), {
      seed: 11,
      degree: 3,
      regressionPaths: 20_000,
      pricingPaths: 20_000,
      dual: { outerPaths: full ? 500 : 40, innerPaths: full ? 500 : 100 },
    });
    const d = res.estimate.dual!;
    const info = `primal ${res.estimate.primal.value} ± ${res.estimate.primal.se}; dual ${d.value} ± ${d.se}, gap ${d.gap} ± ${d.gapSe}`;
    expect(d.gap, info).toBeGreaterThanOrEqual(0);
    expect(d.value + 3 * d.se, info).toBeGreaterThan(4.472 - 3 * 0.01);
    expect(d.innerPaths).toBeGreaterThan(0);
    expect(d.millis).toBeGreaterThan(0);
  });

  it('with one exercise date equals the Black–Scholes European put within 3 SE', () => {
    // Second method in the project: bsPrice (Black & Scholes 1973 closed form); LS Table 1 European column 3.844.
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 36,
      strike: 40,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: [1],
    });
    const r = priceExerciseRight(src, {
      seed: 13,
      regressionPaths: 5000,
      pricingPaths: full ? 400_000 : 100_000,
    });
    const exact = bsPrice({ type: 'put', S: 36, K: 40, T: 1, r: 0.06, q: 0, vol: 0.2 });
    const { value, se } = r.estimate.primal;
    expect(se).toBeLessThan(0.02);
    expect(Math.abs(value - exact), `LSM ${value} ± ${se}, closed form ${exact}`).toBeLessThan(3 * se);
  });

  it('with zero volatility exercises at once when waiting only loses interest (limit σ = 0)', () => {
    // Limit: S(t) = S0 e^{rt}, so the deflated exercise value (K − S0 e^{rt}) e^{−rt} = K e^{−rt} − S0 falls with t
    // and the first date is optimal: value K e^{−r t1} − S0 exactly (common practice).
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 36,
      strike: 40,
      rate: 0.06,
      vol: 0,
      exerciseTimes: equallySpacedTimes(1, 50),
    });
    const r = priceExerciseRight(src, { seed: 19, regressionPaths: 500, pricingPaths: 500 });
    const exact = 40 * Math.exp(-0.06 * 0.02) - 36;
    expect(Math.abs(r.estimate.primal.value - exact)).toBeLessThan(1e-12);
    expect(r.estimate.exerciseProbability[0]!.probability).toBe(1);
  });

  it('a put that can never be in the money is never exercised and is worth nothing', () => {
    // common practice: a strike far below any attainable spot gives a zero exercise value on every path.
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 40,
      strike: 1e-6,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: equallySpacedTimes(1, 10),
    });
    const res = priceExerciseRight(src, { seed: 3, regressionPaths: 2000, pricingPaths: 2000 });
    expect(res.estimate.primal.value).toBe(0);
    expect(res.estimate.neverExercised).toBe(1);
    res.estimate.exerciseProbability.forEach((d) => expect(d.probability).toBe(0));
    res.policy.dates.forEach((d) => expect(d.fit).toBe('none'));
  });

  it('a put deep in the money at the first date is exercised there on every path', () => {
    // common practice: with r > 0, K = 1000 and S = 40, waiting only loses interest on K (the exercise value
    // K − S exceeds the continuation value K e^{−rΔt} − S·(…) at once).
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 40,
      strike: 1000,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: equallySpacedTimes(1, 10),
    });
    const res = priceExerciseRight(src, { seed: 3, regressionPaths: 4000, pricingPaths: 4000 });
    expect(res.estimate.exerciseProbability[0]!.probability).toBe(1);
    // Value = E[(K − S(t1)) e^{−r t1}] = K e^{−r t1} − S0 exactly in expectation (q = 0); judged by its own SE.
    const t1 = 0.1;
    const exact = 1000 * Math.exp(-0.06 * t1) - 40;
    const { value, se } = res.estimate.primal;
    expect(Math.abs(value - exact), `value ${value} ± ${se}, exact ${exact}`).toBeLessThan(3 * se + 1e-9);
  });

  it('re-running both passes with the same seed reproduces the policy and the price bit for bit', () => {
    const settings = {
      seed: 'committee-42',
      degree: 2,
      regressionPaths: 4000,
      pricingPaths: 6000,
      batchSize: 2500,
    };
    const a = priceExerciseRight(source(38, 0.2, 1), settings);
    const b = priceExerciseRight(source(38, 0.2, 1), settings);
    expect(JSON.stringify(b.policy)).toBe(JSON.stringify(a.policy));
    expect(b.estimate.primal.value).toBe(a.estimate.primal.value);
    // A saved policy (JSON round trip) re-priced on the same pricing streams gives the same number.
    const saved = JSON.parse(JSON.stringify(a.policy)) as ExercisePolicy;
    const again = meanAndSe(pricePolicy(source(38, 0.2, 1), saved, settings));
    expect(again.value).toBe(a.estimate.primal.value);
    // A different seed gives a different policy.
    const c = priceExerciseRight(source(38, 0.2, 1), { ...settings, seed: 'committee-43' });
    expect(JSON.stringify(c.policy)).not.toBe(JSON.stringify(a.policy));
  });
});
