/**
 * The decision rule and the attribution with synthetic inputs (no Monte Carlo): known Δ, SE and budgets in, the
 * verdicts DESIGN step 7 prescribes out; Shapley values against the axioms that define them.
 */
import { describe, it, expect } from 'vitest';
import {
  decideLook,
  decideSequential,
  lookSchedule,
  jointTest,
  type FactorEstimate,
  type ErrorBudget,
} from '../../src/engine/study/decision.ts';
import { shapley, shapleyWeights } from '../../src/engine/study/shapley.ts';
import type { ColumnStats } from '../../src/engine/study/stats.ts';
import { expectClose } from './helpers.ts';

const noBudget: ErrorBudget = { stepHalving: 0, calibration: 0, exerciseGap: null };
const est = (factor: string, delta: number, se: number, budget = noBudget): FactorEstimate => ({
  factor,
  delta,
  se,
  budget,
});

/** Φ⁻¹(0.975), Φ⁻¹(1 − 0.05/4) to 4 decimals (standard normal tables, e.g. Abramowitz & Stegun 1964, Table 26.5; from memory). */
const Z975 = 1.96;
const Z9875 = 2.2414;

describe('keep / drop / undecided follow |Δ| ∓ z·SE ∓ b against τ (DESIGN step 7)', () => {
  const tau = 5;
  const alpha = 0.05;
  const cases: { delta: number; se: number; b: number; want: string; why: string }[] = [
    { delta: 10, se: 1, b: 0, want: 'keep', why: '10 − 1.96 = 8.04 > 5' },
    { delta: -10, se: 1, b: 0, want: 'keep', why: 'the sign of Δ does not matter' },
    { delta: 7.5, se: 1, b: 0, want: 'keep', why: '7.5 − 1.96 = 5.54 > 5' },
    { delta: 6.9, se: 1, b: 0, want: 'undecided', why: '6.9 − 1.96 = 4.94 < 5 < 6.9 + 1.96' },
    { delta: 10, se: 1, b: 2.5, want: 'keep', why: '10 − 1.96 − 2.5 = 5.54 > 5' },
    { delta: 10, se: 1, b: 3.1, want: 'undecided', why: '10 − 1.96 − 3.1 = 4.94 < 5' },
    { delta: 1, se: 1, b: 0, want: 'drop', why: '1 + 1.96 = 2.96 < 5' },
    { delta: 3, se: 1, b: 0, want: 'drop', why: '3 + 1.96 = 4.96 < 5' },
    { delta: 3.1, se: 1, b: 0, want: 'undecided', why: '3.1 + 1.96 = 5.06 > 5' },
    { delta: 1, se: 1, b: 2.1, want: 'undecided', why: '1 + 1.96 + 2.1 = 5.06 > 5' },
    { delta: 0, se: 0, b: 0, want: 'drop', why: 'an exact zero is immaterial' },
    { delta: 5, se: 3, b: 0, want: 'undecided', why: 'at the threshold' },
  ];
  for (const c of cases)
    it(`Δ = ${c.delta}, SE = ${c.se}, b = ${c.b}, τ = ${tau}: ${c.want} (${c.why})`, () => {
      const [row] = decideLook(
        [est('f', c.delta, c.se, { stepHalving: c.b, calibration: 0, exerciseGap: null })],
        tau,
        alpha,
      );
      expect(row!.verdict, JSON.stringify({ ...c, row })).toBe(c.want);
      expectClose('z for one factor at α = 0.05', row!.z, Z975, 5e-3);
    });

  it('the budget parts add up (stepHalving + calibration + exercise gap)', () => {
    const [a] = decideLook(
      [est('f', 10, 1, { stepHalving: 1, calibration: 1, exerciseGap: 1.1 })],
      tau,
      alpha,
    );
    expect(a!.budget).toBeCloseTo(3.1, 12);
    expect(a!.verdict).toBe('undecided'); // 10 − 1.96 − 3.1 = 4.94 < 5
  });

  it('Holm (1979): two factors at the same statistic are both undecided when z = 2.2414 is not reached, one alone is decided', () => {
    // Statistic 2.1: p = 2(1 − Φ(2.1)) = 0.0357 (normal tables; from memory) ≤ 0.05 alone, > 0.025 as the first of two.
    const d = 5 + 2.1; // keep side: (|Δ| − τ)/SE = 2.1
    expect(decideLook([est('a', d, 1)], tau, alpha)[0]!.verdict).toBe('keep');
    const two = decideLook([est('a', d, 1), est('b', d, 1)], tau, alpha);
    expect(two.map((r) => r.verdict)).toEqual(['undecided', 'undecided']);
    expectClose('Holm first-step z for two factors', Math.max(two[0]!.z, two[1]!.z), Z9875, 5e-3);
    // Step-down: once the strongest factor is decided, the second is tested at the full α.
    const mixed = decideLook([est('a', 5 + 10, 1), est('b', d, 1)], tau, alpha);
    expect(mixed.map((r) => r.verdict)).toEqual(['keep', 'keep']);
  });

  it('over looks, a verdict is final once reached and the error spent over all looks is α (Lan & DeMets 1983)', () => {
    const schedule = lookSchedule({ firstPaths: 1000, finalPaths: 8000, alpha, spending: 'obrienFleming' });
    expect(schedule.map((l) => l.paths)).toEqual([1000, 2000, 4000, 8000]);
    expectClose(
      'Σ increments = α',
      schedule.reduce((s, l) => s + l.increment, 0),
      alpha,
      1e-12,
    );
    // O'Brien–Fleming type spends little early: the first look at t = 1/8 uses 2 − 2Φ(1.96·√8) ≈ 2.7e-8 (from the formula).
    expect(schedule[0]!.increment).toBeLessThan(1e-6);
    const looks = [
      [est('a', 7, 0.4), est('b', 1, 0.4), est('c', 20, 0.5)],
      [est('a', 4.9, 0.3), est('b', 1, 0.3), est('c', 4, 0.5)],
      [est('a', 5, 0.2), est('b', 1, 0.2), est('c', 4, 0.5)],
    ];
    const res = decideSequential({ looks, schedule, tau });
    const by = (f: string) => res.find((r) => r.factor === f)!;
    // Look 0 spends 2 − 2Φ(1.96·√8) ≈ 3e-8: c ((20 − 5)/0.5 = 30) and b ((5 − 1)/0.4 = 10) pass Holm's levels,
    // a ((7 − 5)/0.4 = 5, p ≈ 6e-7) does not.
    expect(by('c').verdict).toBe('keep');
    expect(by('c').decidedAtLook).toBe(0);
    expect(by('b').verdict).toBe('drop');
    expect(by('b').decidedAtLook).toBe(0);
    // c's later estimates (Δ = 4 < τ) do not undo the verdict reached at look 0.
    expect(by('c').history[2]!.verdict).not.toBe('keep');
    // a: at look 1 |Δ| = 4.9 is within 0.33 SE of τ, at look 2 exactly at τ: never decided.
    expect(by('a').verdict).toBe('undecided');
    expect(by('a').decidedAtLook).toBeNull();
    expect(by('a').history.length).toBe(3);
  });

  it('the joint test confirms, rejects or stays inconclusive by the same inequalities', () => {
    const z = Z975;
    expect(jointTest({ dropped: ['a'], difference: 1, se: 1, budget: 0, tau, alpha }).outcome).toBe(
      'confirmed',
    ); // 1 + z < 5
    expect(jointTest({ dropped: ['a'], difference: -9, se: 1, budget: 0, tau, alpha }).outcome).toBe(
      'rejected',
    ); // 9 − z > 5
    expect(jointTest({ dropped: ['a'], difference: 4, se: 1, budget: 0, tau, alpha }).outcome).toBe(
      'inconclusive',
    );
    expect(jointTest({ dropped: [], difference: 0, se: 0, budget: 0, tau, alpha }).outcome).toBe(
      'nothingDropped',
    );
    expectClose('z', jointTest({ dropped: ['a'], difference: 0, se: 1, budget: 0, tau, alpha }).z, z, 5e-3);
  });
});

/** Deterministic paired columns (not random draws): column m holds price(mask m) + a common per-path wiggle. */
function statsOf(prices: number[], n = 50): ColumnStats {
  const k = prices.length;
  const rows: number[][] = [];
  for (let p = 0; p < n; p++)
    rows.push(prices.map((v, m) => v + (p % 2 ? 1 : -1) * (1 + 0.1 * m + 0.01 * p)));
  const mean = prices.map((_, m) => rows.reduce((s, r) => s + r[m]!, 0) / n);
  const cov = prices.map((_, a) =>
    prices.map((__, b) => rows.reduce((s, r) => s + (r[a]! - mean[a]!) * (r[b]! - mean[b]!), 0) / (n - 1)),
  );
  return { n, mean, cov: k ? cov : [] };
}

describe('Shapley attribution over the ladder (Shapley 1953 axioms)', () => {
  it('efficiency: the values add up to the richest minus the base, for a game with interactions (k = 3)', () => {
    // v(mask) arbitrary with interactions; prices indexed by subset mask.
    const prices = [100, 103, 98, 104.5, 101, 106, 97.2, 109.3];
    const st = statsOf(prices);
    const phi = shapley({ factors: ['sv', 'rd', 'rf'], stats: st, column: (m) => m });
    expectClose(
      'Σ φ = v(N) − v(∅)',
      phi.reduce((s, x) => s + x.value, 0),
      st.mean[7]! - st.mean[0]!,
      1e-10,
    );
  });

  it('additive game: each factor gets its own effect; pure interaction: split equally', () => {
    const a = [2, -3, 5];
    const additive = Array.from(
      { length: 8 },
      (_, m) => 50 + a.reduce((s, x, i) => s + (m & (1 << i) ? x : 0), 0),
    );
    const phi = shapley({ factors: ['x', 'y', 'z'], stats: statsOf(additive), column: (m) => m });
    phi.forEach((p, i) => expectClose(`additive φ_${i}`, p.value, a[i]!, 1e-10));
    const interaction = Array.from({ length: 8 }, (_, m) => (m === 7 ? 9 : 0));
    const phi2 = shapley({ factors: ['x', 'y', 'z'], stats: statsOf(interaction), column: (m) => m });
    phi2.forEach((p, i) => expectClose(`symmetric φ_${i}`, p.value, 3, 1e-10));
  });

  it('weights of one factor sum to zero and give the marginal contribution at k = 1', () => {
    for (const k of [1, 2, 3, 4])
      for (let f = 0; f < k; f++)
        expectClose(
          `Σ w, k = ${k}, f = ${f}`,
          shapleyWeights(k, f).reduce((s, x) => s + x, 0),
          0,
          1e-12,
        );
    expect(shapleyWeights(1, 0)).toEqual([-1, 1]);
  });

  it('the SE of a Shapley value is the SE of its linear combination of paired columns (Glasserman 2003, Sec. 4.2)', () => {
    const prices = [10, 12, 11, 14];
    const st = statsOf(prices);
    const phi = shapley({ factors: ['a', 'b'], stats: st, column: (m) => m });
    const w = shapleyWeights(2, 0);
    let q = 0;
    for (let i = 0; i < 4; i++) for (let j = 0; j < 4; j++) q += w[i]! * w[j]! * st.cov[i]![j]!;
    expectClose('SE φ_a', phi[0]!.se, Math.sqrt(q / st.n), 1e-12);
  });
});
