/**
 * What would decide an undecided factor: the arithmetic of each suggestion, argued from the rule it serves
 * (keep if |Δ| − z·SE − b > τ, drop if |Δ| + z·SE + b < τ) and from the scaling each remedy assumes:
 * SE ∝ 1/√n for independent paths (Glasserman 2004, Monte Carlo Methods in Financial Engineering, Sec. 1.1.1) and a
 * discretisation change first order in the step (common practice for a weak-order-one scheme).
 * The numbers in the cases are arbitrary inputs, not results of the tool.
 */
import { describe, it, expect } from 'vitest';
import { whatWouldDecide, type DecidingContext } from '../../../src/engine/study/whatWouldDecide.ts';
import type { ErrorBudget } from '../../../src/engine/study/decision.ts';

const ctx = (over: Partial<DecidingContext> = {}): DecidingContext => ({
  paths: 8192,
  batchSize: 1024,
  maxStep: 0.25,
  stepChange: null,
  vegaPerUnit: null,
  calibration: null,
  repricing: null,
  dual: null,
  ...over,
});
const noBudget: ErrorBudget = { stepHalving: 0, calibration: 0, repricing: 0, exerciseGap: null };

describe('what would decide: more paths', () => {
  it('the suggested path count is the smallest batch multiple at which z·SE·√(n/n′) fits the room d − b', () => {
    const cases = [
      { delta: 90, se: 10, z: 2.5, tau: 100, parts: noBudget },
      { delta: -130, se: 12, z: 2.2, tau: 100, parts: noBudget },
      { delta: 70, se: 9, z: 2.8, tau: 100, parts: { ...noBudget, calibration: 5, repricing: 3 } },
      { delta: 1.2, se: 0.5, z: 3.1, tau: 1, parts: { ...noBudget, exerciseGap: 0.05 } },
    ];
    for (const c of cases) {
      const b =
        c.parts.stepHalving + c.parts.calibration + (c.parts.repricing ?? 0) + (c.parts.exerciseGap ?? 0);
      const w = whatWouldDecide({
        decision: { delta: c.delta, se: c.se, z: c.z, budget: b },
        tau: c.tau,
        parts: c.parts,
        context: ctx(),
      });
      const noise = w.items.find((x) => x.part === 'noise')!;
      const room = Math.abs(Math.abs(c.delta) - c.tau) - b;
      expect(noise.room, JSON.stringify(c)).toBeCloseTo(room, 12);
      const n = noise.paths!;
      const fitsAt = (m: number) => c.z * c.se * Math.sqrt(8192 / m) <= room * (1 + 1e-12);
      expect(n % 1024, `${JSON.stringify(c)}: ${n} is a batch multiple`).toBe(0);
      expect(fitsAt(n), `${JSON.stringify(c)}: z·SE fits at ${n} paths`).toBe(true);
      if (n > 8192) expect(fitsAt(n - 1024), `${JSON.stringify(c)}: not one batch fewer`).toBe(false);
    }
  });
  it('no path count can when the error budget alone reaches τ', () => {
    const parts = { ...noBudget, stepHalving: 30 };
    const w = whatWouldDecide({
      decision: { delta: 80, se: 5, z: 2, budget: 30 },
      tau: 100,
      parts,
      context: ctx({ stepChange: { value: 40, se: 5 } }),
    });
    const noise = w.items.find((x) => x.part === 'noise')!;
    expect(noise.paths).toBeNull();
    expect(noise.remedy).toMatch(/no path count can/);
    expect(w.largest).toBe('stepHalving');
  });
});

describe('what would decide: a smaller time step', () => {
  it('at the suggested step the first-order budget part max(0, |c|·h/h₀ − 2 SE) equals its room', () => {
    // d = 40, z·SE = 4, b = 50 (step halving 50 = |c| − 2 SE with c = 60, SE 5): the step part's room is 36.
    const parts = { ...noBudget, stepHalving: 50 };
    const c = { value: -60, se: 5 };
    const w = whatWouldDecide({
      decision: { delta: 60, se: 2, z: 2, budget: 50 },
      tau: 100,
      parts,
      context: ctx({ stepChange: c, maxStep: 0.5 }),
    });
    const it0 = w.items[0]!;
    expect(it0.part).toBe('stepHalving');
    expect(it0.room).toBeCloseTo(36, 12);
    const h = it0.maxStep!;
    expect(h).toBeLessThan(0.5);
    expect(Math.max(0, (Math.abs(c.value) * h) / 0.5 - 2 * c.se)).toBeCloseTo(36, 10);
    expect(it0.remedy).toMatch(/days/);
    expect(w.summary).toMatch(/^largest is the step-halving part/);
  });
  it('says no step can when Δ sits on τ', () => {
    const parts = { ...noBudget, stepHalving: 10 };
    const w = whatWouldDecide({
      decision: { delta: 100, se: 3, z: 2, budget: 10 },
      tau: 100,
      parts,
      context: ctx({ stepChange: { value: 14, se: 2 } }),
    });
    expect(w.distance).toBe(0);
    expect(w.slack).toBeLessThan(0);
    const st = w.items.find((x) => x.part === 'stepHalving')!;
    expect(st.maxStep).toBeNull();
    expect(st.remedy).toMatch(/no time step can/);
    expect(w.items.find((x) => x.part === 'noise')!.paths).toBeNull();
  });
});

describe('what would decide: calibration, repricing and exercise', () => {
  it('names the variant and quote that set the calibration part, and the fit error at which it would fit', () => {
    const parts = { stepHalving: 0, calibration: 40, repricing: 8, exerciseGap: 6 };
    const vega = 2000; // per unit of vol
    const w = whatWouldDecide({
      decision: { delta: 130, se: 2, z: 2.5, budget: 54 },
      tau: 100,
      parts,
      context: ctx({
        vegaPerUnit: vega,
        calibration: { variant: 'heston', instrument: 'ALDR 1y 90%', volError: 0.015 },
        repricing: { variant: 'heston+hw(DOM)', instrument: 'ALDR call K=4620 T=1', volExcess: 0.004 },
        dual: { outer: 500, inner: 64 },
      }),
    });
    // d = 30, z·SE = 5; rooms: calibration 30 − (5 + 14) = 11, repricing 30 − 51 < 0, exercise 30 − 53 < 0.
    expect(w.items.map((x) => x.part)).toEqual(['calibration', 'repricing', 'exerciseGap', 'noise']);
    expect(w.largest).toBe('calibration');
    const cal = w.items[0]!;
    expect(cal.variant).toBe('heston');
    expect(cal.instrument).toBe('ALDR 1y 90%');
    expect(cal.room).toBeCloseTo(11, 12);
    expect(cal.targetVolError! * vega).toBeCloseTo(cal.room, 10);
    expect(cal.remedy).toMatch(/heston at ALDR 1y 90%/);
    const rep = w.items[1]!;
    expect(rep.variant).toBe('heston+hw(DOM)');
    expect(rep.targetVolError).toBeNull();
    const ex = w.items[2]!;
    expect(ex.dualPaths).toEqual({ outer: 500, inner: 64 });
    expect(ex.remedy).toMatch(/500 × 64/);
    for (const x of w.items) expect(x.room).toBeCloseTo(30 - (5 + 54 - x.size), 12);
  });
  it('the exercise gap: outer paths at which its noise part 2·SE (∝ 1/√outer) brings it into its room', () => {
    // Part = gap estimates 20 + noise 2·SE 30 = 50; d = 45, z·SE = 4 → room 41 > gap 20: the noise must fall to 21.
    const parts = { ...noBudget, exerciseGap: 50 };
    const w = whatWouldDecide({
      decision: { delta: 55, se: 2, z: 2, budget: 50 },
      tau: 100,
      parts,
      context: ctx({ dual: { outer: 256, inner: 64, gap: 20, noise: 30 } }),
    });
    const ex = w.items.find((x) => x.part === 'exerciseGap')!;
    expect(ex.room).toBeCloseTo(41, 12);
    const n = ex.outerPaths!;
    const fits = (m: number) => 20 + 30 * Math.sqrt(256 / m) <= 41 + 1e-9;
    expect(fits(n), `${n} outer paths`).toBe(true);
    expect(fits(n - 1), `${n - 1} outer paths`).toBe(false);
    expect(ex.remedy).toMatch(new RegExp(`about ${n} outer paths`));
    // When the gap estimate alone fills the room, no outer count can: the policy or the inner paths must improve.
    const w2 = whatWouldDecide({
      decision: { delta: 55, se: 2, z: 2, budget: 50 },
      tau: 100,
      parts,
      context: ctx({ dual: { outer: 256, inner: 64, gap: 45, noise: 5 } }),
    });
    const ex2 = w2.items.find((x) => x.part === 'exerciseGap')!;
    expect(ex2.outerPaths).toBeNull();
    expect(ex2.remedy).toMatch(/better exercise policy/);
  });
  it('an interval that clears τ but stopped at Holm’s step-down names no part', () => {
    const w = whatWouldDecide({
      decision: { delta: 200, se: 10, z: 2, budget: 5 },
      tau: 100,
      parts: { ...noBudget, calibration: 5 },
      context: ctx({ vegaPerUnit: 100 }),
    });
    expect(w.largest).toBeNull();
    expect(w.summary).toMatch(/step-down/);
  });
});
