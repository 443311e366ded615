/**
 * Default study settings, in a module of their own (types and the rules' defaults only) so the app's UI thread can
 * start a new document from them without loading the engine.
 */
import type { StudySettings } from './types.ts';
import { DEFAULT_RULE_SETTINGS } from './rules.ts';

/** Default settings; every field can be overridden. */
export const DEFAULT_SETTINGS: StudySettings = {
  seed: 'factor-triage',
  paths: 65536,
  firstPaths: 8192,
  batchSize: 4096,
  maxStep: 0.25,
  scheme: 'qe',
  alpha: 0.05,
  spending: 'obrienFleming',
  threshold: { kind: 'bp', value: 10 },
  calibration: 'fair',
  greeks: {
    spotBump: 0.01,
    rateBump: 1e-4,
    volBump: 0.01,
    deltaThreshold: 10,
    vegaThreshold: 5,
    rhoThreshold: 0.5,
  },
  sweeps: { points: 5 },
  localVol: true,
  rules: DEFAULT_RULE_SETTINGS,
  extraCandidates: [],
  calibrationStrikes: {},
  auxiliaryFraction: 0.25,
};
