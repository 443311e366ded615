import { describe, it, expect } from 'vitest';
import seedrandom from 'seedrandom';
import {
  alphaSpent,
  budgetTotal,
  lookSchedule,
  decideLook,
  decideSequential,
  jointTest,
  thresholdAmount,
  type FactorEstimate,
} from '../../../src/engine/study/decision.ts';
import { normQuantile } from '../../../src/engine/study/stats.ts';

const noBudget = { stepHalving: 0, calibration: 0, exerciseGap: null };
const est = (factor: string, delta: number, se: number, b = 0): FactorEstimate => ({
  factor,
  delta,
  se,
  budget: { stepHalving: b, calibration: 0, exerciseGap: null },
});

describe('alpha spending', () => {
  // Lan & DeMets (1983), Biometrika 70(3) p. 659: both spending functions spend exactly α by t = 1 and nothing at t = 0.
  it('spends α in total and nothing at the start', () => {
    for (const kind of ['obrienFleming', 'pocock'] as const) {
      expect(alphaSpent(kind, 0.05, 1)).toBeCloseTo(0.05, 12);
      expect(alphaSpent(kind, 0.05, 0)).toBe(0);
    }
  });
  // Lan & DeMets (1983): α₁(t) = 2 − 2Φ(z_{α/2}/√t); at t = 1/4, z/√t = 2·1.959964 = 3.919928 → 2(1 − Φ(3.919928)) ≈ 8.86e−5
  // (tail value from A&S 1964 Table 26.1 at x ≈ 3.92: 1 − Φ = 4.43e−5).
  it("the O'Brien–Fleming type spends almost nothing early", () => {
    expect(alphaSpent('obrienFleming', 0.05, 0.25)).toBeCloseTo(8.86e-5, 6);
    // Pocock type at t = 1/4: 0.05·ln(1 + (e − 1)/4) = 0.05·ln(1.429570) (hand computation) = 0.017866.
    expect(alphaSpent('pocock', 0.05, 0.25)).toBeCloseTo(0.017866, 5);
  });
  it('the doubling schedule ends at the final path count and its increments add up to α', () => {
    const s = lookSchedule({ firstPaths: 1000, finalPaths: 8000, alpha: 0.05, spending: 'obrienFleming' });
    expect(s.map((l) => l.paths)).toEqual([1000, 2000, 4000, 8000]);
    expect(s.reduce((a, l) => a + l.increment, 0)).toBeCloseTo(0.05, 12);
    const odd = lookSchedule({ firstPaths: 1000, finalPaths: 5000, alpha: 0.05, spending: 'pocock' });
    expect(odd.map((l) => l.paths)).toEqual([1000, 2000, 4000, 5000]);
  });
});

describe('threshold', () => {
  // common practice: 1 bp of notional = 1e-4 × notional.
  it('converts basis points of notional, amounts and bid–offer fractions', () => {
    expect(thresholdAmount({ kind: 'bp', value: 5 }, 1_000_000)).toBeCloseTo(500, 9);
    expect(thresholdAmount({ kind: 'amount', value: 250 }, 1)).toBe(250);
    expect(thresholdAmount({ kind: 'bidOffer', fraction: 0.25, width: 0.8 }, 1)).toBeCloseTo(0.2, 12);
  });
  it('refuses a zero threshold, naming the field', () => {
    expect(() => thresholdAmount({ kind: 'bp', value: 0 }, 100)).toThrow(/settings\.threshold\.value/);
  });
});

describe('decision rule at one look', () => {
  // The rule's inequalities (DESIGN step 7) with one factor: z = Φ⁻¹(1 − α/2) = 1.959964 at α = 0.05.
  it('keeps a factor whose lower bound clears the threshold', () => {
    // |Δ| − z·SE − b = 10 − 1.96 − 1 = 7.04 > τ = 5 → keep.
    const [d] = decideLook([est('rd', -10, 1, 1)], 5, 0.05);
    expect(d!.verdict).toBe('keep');
    expect(d!.z).toBeCloseTo(1.959964, 5);
  });
  it('drops a factor whose upper bound is below the threshold', () => {
    // |Δ| + z·SE + b = 1 + 1.96 + 1 = 3.96 < 5 → drop.
    expect(decideLook([est('sv', 1, 1, 1)], 5, 0.05)[0]!.verdict).toBe('drop');
  });
  it('reports undecided when the interval straddles the threshold, never rounding it', () => {
    // 5.5 − 1.96 < 5 < 5.5 + 1.96 → neither inequality holds.
    const d = decideLook([est('sv', 5.5, 1)], 5, 0.05)[0]!;
    expect(d.verdict).toBe('undecided');
    // The budget alone can make a clear estimate undecided: 4 + 0.01·1.96 + 2 > 5 and 4 − ... < 5.
    expect(decideLook([est('rd', 4, 0.01, 2)], 5, 0.05)[0]!.verdict).toBe('undecided');
  });
  // Holm (1979), Scand. J. Statist. 6: step-down at α/m, α/(m−1), ...; stops at the first non-rejection.
  it("applies Holm's step-down across factors", () => {
    // Three factors, SE = 1, τ = 0, b = 0 would be invalid (τ > 0 required), so take τ = 1 and Δ = 1 + s, statistic s.
    // s = 2.3: p = 0.0214 ≤ 0.05/3 = 0.0167? No → with Holm nothing is decided, though alone (p ≤ 0.05) it would be.
    const alone = decideLook([est('a', 3.3, 1)], 1, 0.05)[0]!;
    expect(alone.verdict).toBe('keep');
    const three = decideLook([est('a', 3.3, 1), est('b', 1.2, 1), est('c', 1.1, 1)], 1, 0.05);
    expect(three.map((r) => r.verdict)).toEqual(['undecided', 'undecided', 'undecided']);
    // s = 2.5 (p = 0.0124 ≤ 0.0167) and s = 2.1 (p = 0.0357 > 0.025): first decided, second stops the chain.
    const two = decideLook([est('a', 3.5, 1), est('b', 3.1, 1), est('c', 1.0, 1)], 1, 0.05);
    expect(two.map((r) => r.verdict)).toEqual(['keep', 'undecided', 'undecided']);
    expect(two[0]!.z).toBeCloseTo(normQuantile(1 - 0.05 / 6), 10);
  });
  it('refuses a zero threshold', () => {
    expect(() => decideLook([est('a', 1, 1)], 0, 0.05)).toThrow(/threshold/);
  });
});

describe('sequential decision', () => {
  it('keeps the first verdict reached and records its look', () => {
    const schedule = lookSchedule({ firstPaths: 100, finalPaths: 400, alpha: 0.05, spending: 'pocock' });
    const looks = [[est('rd', 20, 1)], [est('rd', 5.2, 1)], [est('rd', 5.1, 0.5)]];
    const [r] = decideSequential({ looks, schedule, tau: 5 });
    expect(r!.verdict).toBe('keep');
    expect(r!.decidedAtLook).toBe(0);
    expect(r!.history).toHaveLength(3);
  });

  // Property of the design, argued independently: by the union bound over looks and Holm within a look, the chance
  // of any wrong verdict is at most α. Simulated here at the worst case |Δ| = τ (every verdict wrong-or-undecided
  // is then 'keep' or 'drop' = wrong), with Brownian-motion estimates Δ̂_j = τ + W(n_j)/n_j (common practice).
  it('holds the family-wise error at α over looks and factors (seeded simulation)', () => {
    const rng = seedrandom('decision-error-rate');
    const gauss = () => {
      const u = Math.max(rng(), 1e-300);
      return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng());
    };
    const alpha = 0.1;
    const schedule = lookSchedule({ firstPaths: 1, finalPaths: 8, alpha, spending: 'pocock' });
    const reps = 4000;
    let wrong = 0;
    for (let r = 0; r < reps; r++) {
      const sums = [0, 0];
      let prevN = 0;
      const looks: FactorEstimate[][] = [];
      for (const l of schedule) {
        const dn = l.paths - prevN;
        prevN = l.paths;
        for (let f = 0; f < 2; f++) sums[f]! += Math.sqrt(dn) * gauss();
        looks.push(
          [0, 1].map((f) => ({
            factor: `f${f}`,
            delta: 1 + sums[f]! / l.paths,
            se: 1 / Math.sqrt(l.paths),
            budget: noBudget,
          })),
        );
      }
      const res = decideSequential({ looks, schedule, tau: 1 });
      if (res.some((x) => x.verdict !== 'undecided')) wrong++;
    }
    const rate = wrong / reps;
    // Binomial SE at the bound: √(α(1−α)/reps) = 0.0047; allow 3 SE above α.
    expect(rate, `wrong-verdict rate ${rate}`).toBeLessThan(
      alpha + 3 * Math.sqrt((alpha * (1 - alpha)) / reps),
    );
  });
});

describe('joint test', () => {
  it('confirms a reduced model whose total difference is clearly below τ, rejects one clearly above', () => {
    expect(
      jointTest({ dropped: ['sv'], difference: 0.5, se: 0.1, budget: 0.1, tau: 1, alpha: 0.05 }).outcome,
    ).toBe('confirmed');
    expect(
      jointTest({ dropped: ['sv', 'rd'], difference: -3, se: 0.1, budget: 0.1, tau: 1, alpha: 0.05 }).outcome,
    ).toBe('rejected');
    expect(
      jointTest({ dropped: ['sv'], difference: 1, se: 0.1, budget: 0, tau: 1, alpha: 0.05 }).outcome,
    ).toBe('inconclusive');
    expect(jointTest({ dropped: [], difference: 0, se: 0, budget: 0, tau: 1, alpha: 0.05 }).outcome).toBe(
      'nothingDropped',
    );
  });
});

describe('extreme schedules', () => {
  // Lan & DeMets (1983): with many looks the O'Brien–Fleming-type spending of the first look underflows to 0; such a
  // look cannot decide, and its critical value stays finite so the study file remains valid JSON.
  it('a look that spends nothing decides nothing and reports a finite z', () => {
    const s = lookSchedule({ firstPaths: 1, finalPaths: 4096, alpha: 0.05, spending: 'obrienFleming' });
    expect(s[0]!.increment).toBe(0);
    const [d] = decideLook([est('a', 1e6, 1)], 1, s[0]!.increment);
    expect(d!.verdict).toBe('undecided');
    expect(Number.isFinite(d!.z)).toBe(true);
  });
  it('computes the Holm critical value accurately for tiny levels', () => {
    const [d] = decideLook([est('a', 100, 1)], 1, 1e-12);
    expect(d!.z).toBeCloseTo(-normQuantile(0.5e-12), 10);
    expect(d!.z).toBeGreaterThan(7);
  });
});

describe('repricing part of the budget', () => {
  // The rule's inequalities (DESIGN step 7) with b = step halving + calibration + repricing + exercise gap
  // (triangle inequality; common practice): z = Φ⁻¹(1 − α/2) = 1.959964 at α = 0.05, τ = 1.
  const z = 1.959963984540054;
  it('adds into budgetTotal; an older budget without it counts it as zero', () => {
    expect(budgetTotal({ stepHalving: 0.1, calibration: 0.2, repricing: 0.4, exerciseGap: 0.8 })).toBeCloseTo(
      1.5,
      14,
    );
    expect(budgetTotal({ stepHalving: 0.1, calibration: 0.2, exerciseGap: null })).toBeCloseTo(0.3, 14);
  });
  it('flips a keep to undecided once the repricing error is budgeted', () => {
    // |Δ| − z·SE = 1.5 − 0.196 = 1.304 > τ = 1 with b = 0.1 → keep; the same Δ with a repricing part of 0.3 gives
    // 1.304 − 0.4 = 0.904 < τ, while |Δ| + z·SE + b = 2.096 > τ: neither side holds → undecided.
    const base = { factor: 'f', delta: 1.5, se: 0.1 };
    const [kept] = decideLook(
      [{ ...base, budget: { stepHalving: 0.05, calibration: 0.05, repricing: 0, exerciseGap: null } }],
      1,
      0.05,
    );
    expect(kept!.verdict).toBe('keep');
    const [held] = decideLook(
      [{ ...base, budget: { stepHalving: 0.05, calibration: 0.05, repricing: 0.3, exerciseGap: null } }],
      1,
      0.05,
    );
    expect(held!.verdict, `|Δ| − z·SE − b = ${1.5 - z * 0.1 - 0.4} against τ = 1`).toBe('undecided');
    expect(held!.budget).toBeCloseTo(0.4, 14);
  });
  it('enters the joint test, which records the parts it was given', () => {
    // D = 0.5, SE = 0.1: 0.5 + 0.196 + b < 1 needs b < 0.304; a repricing part of 0.2 on top of 0.15 breaks it.
    const parts = { stepHalving: 0.1, calibration: 0.05, repricing: 0.2, exerciseGap: null };
    const j = jointTest({ dropped: ['sv'], difference: 0.5, se: 0.1, budget: parts, tau: 1, alpha: 0.05 });
    expect(j.outcome).toBe('inconclusive');
    expect(j.budget).toBeCloseTo(0.35, 14);
    expect(j.budgetParts).toEqual(parts);
    const without = jointTest({
      dropped: ['sv'],
      difference: 0.5,
      se: 0.1,
      budget: { ...parts, repricing: 0 },
      tau: 1,
      alpha: 0.05,
    });
    expect(without.outcome).toBe('confirmed');
  });
});
