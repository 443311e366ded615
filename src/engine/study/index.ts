/**
 * The factor study's public API (plain data in, plain data out; safe to call from a Web Worker).
 */
export {
  runStudy,
  checkSettings,
  DEFAULT_SETTINGS,
  TOOL_VERSION,
  type RunStudyOptions,
  type StudyProgress,
} from './study.ts';
export { verifyStudy, type VerifyResult } from './verify.ts';
export { diffStudies, type StudyDiff, type FieldChange } from './diff.ts';
export {
  parseStudyFile,
  studyHash,
  sealStudy,
  checkStudyHash,
  comparablePart,
  firstDifference,
  settingsSchema,
} from './savedStudy.ts';
export { canonicalJson } from './canonical.ts';
export { sha256Hex } from './sha256.ts';
export * from './types.ts';
export {
  applyRules,
  candidateFactors,
  requiredFactors,
  DEFAULT_RULE_SETTINGS,
  FACTOR_IDS,
  FACTOR_LABELS,
  type FactorId,
  type FactorRule,
  type FactorStatus,
  type RuleSettings,
  type RulesResult,
} from './rules.ts';
export {
  alphaSpent,
  lookSchedule,
  decideLook,
  decideSequential,
  jointTest,
  thresholdAmount,
  budgetTotal,
  type Verdict,
  type Threshold,
  type ErrorBudget,
  type Look,
  type SpendingKind,
  type FactorEstimate,
  type FactorLookDecision,
  type FactorDecision,
  type JointTest,
} from './decision.ts';
export { shapley, shapleyWeights } from './shapley.ts';
export {
  calibrateLadder,
  calibrationExpiries,
  fitHullWhite,
  ladderFactors,
  maskFactors,
  snapshotLadderBasis,
  studyLadderRequest,
  variantId,
  type CapletQuote,
  type CalibratedLadder,
  type EquityFitReport,
  type LadderBasis,
  type LadderFitReports,
  type LadderRequest,
  type LadderSettings,
} from './ladderCalibration.ts';
export { studyInProcessExecutor } from './studyExecutor.ts';
