/**
 * A minimal, hand-written saved study (invented demo numbers, not results of the tool) for testing the file
 * format, the hash and the diff. Not an oracle for any price.
 */
import { sealStudy } from '../../../src/engine/study/savedStudy.ts';
import type { SavedStudy } from '../../../src/engine/study/types.ts';
import { DEFAULT_RULE_SETTINGS } from '../../../src/engine/study/rules.ts';

export function fixtureStudy(): SavedStudy {
  return sealStudy({
    format: 'factor-triage/study@1',
    tool: { name: 'factor-triage', version: '0.1.0' },
    input: {
      deal: { format: 'factor-triage/deal@1', name: 'hand-written', notional: 100, currency: 'DOM' } as never,
      markets: [{ schema: 'factor-triage/market@1', date: '2026-11-23', domestic: 'DOM' } as never],
      settings: {
        seed: 'fixture',
        paths: 4000,
        firstPaths: 1000,
        batchSize: 1000,
        maxStep: 0.25,
        scheme: 'qe',
        alpha: 0.05,
        spending: 'obrienFleming',
        threshold: { kind: 'bp', value: 10 },
        calibration: 'fair',
        greeks: null,
        sweeps: null,
        localVol: false,
        rules: DEFAULT_RULE_SETTINGS,
        extraCandidates: [],
        calibrationStrikes: {},
        auxiliaryFraction: 0.25,
      },
    },
    analysis: { format: 'factor-triage/deal-analysis@1', lastTime: 1 } as never,
    rules: { factors: [{ factor: 'domesticRate', status: 'candidate', reason: 'long maturity' }], notes: [] },
    candidates: ['domesticRate'],
    required: [],
    ladder: [
      {
        id: 'base',
        label: 'base',
        mask: 0,
        factors: [],
        role: 'ladder',
        spec: { id: 'base', domestic: 'DOM' } as never,
        calibration: {
          characteristicFunction: 'exact',
          rmseVol: 0,
          maxAbsVolError: 0,
          seconds: 0.01,
          fit: [],
          warnings: [],
          feller: {},
        },
      },
    ],
    results: {
      looks: [{ paths: 4000, fraction: 1, spent: 0.05, increment: 0.05 }],
      prices: [{ value: 10.5, se: 0.1 }],
      convergence: [],
      tau: 0.1,
      joint: null,
      shapley: [],
      greeks: null,
      greekVerdicts: [],
      sweeps: [],
      localVol: null,
      modelRisk: { min: 10.5, max: 10.5, spread: 0, variants: ['base'] },
      stepHalving: {},
      stepHalvingChange: {},
      stability: [],
    },
    verdicts: [
      {
        factor: 'domesticRate',
        status: 'candidate',
        verdict: 'undecided',
        decision: null,
        decidedAtLook: null,
        reason: 'interval straddles the threshold',
      },
    ],
    recommended: { factors: ['domesticRate'], variant: 'base', summary: 'keep the undecided factor' },
    warnings: [],
    limitations: [],
    timings: { total: 1.5, calibration: 0.5, simulation: 0.8, payoff: 0.2, perVariant: {}, workers: 1 },
  });
}
