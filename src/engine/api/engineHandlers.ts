/**
 * The engine's implementation of every protocol method: thin adapters from the protocol's plain
 * arguments to the engine's own entry points (no engine logic lives here).
 */
import { EngineError, issue, type FieldIssue } from '../errors.ts';
import { checkDeal } from '../deal/compileDeal.ts';
import { checkExpression } from '../deal/checkExpression.ts';
import { analyseDeal } from '../deal/analyseDeal.ts';
import type { DealAnalysis } from '../deal/types.ts';
import { minEigenvalue, nearestCorrelation } from '../math/linalg.ts';
import { correlationIssues } from '../market/correlation.ts';
import { parseSnapshot } from '../market/snapshot.ts';
import { parseStudyFile, checkStudyHash } from '../study/savedStudy.ts';
import { diffStudies } from '../study/diff.ts';
import { applyRules, DEFAULT_RULE_SETTINGS, type RuleSettings } from '../study/rules.ts';
import { runStudy } from '../study/study.ts';
import { verifyStudy } from '../study/verify.ts';
import { calibrationStability } from '../calibration/calibrationStability.ts';
import { checkArgs } from './requestShape.ts';
import {
  PROTOCOL_VERSION,
  type CorrelationCheck,
  type DealReview,
  type MarketCheck,
  type EngineHandlers,
  type EngineMethod,
  type OpenedStudy,
} from './protocol.ts';

/** Largest study file the engine reads (characters). */
export const MAX_STUDY_TEXT = 64 * 1024 * 1024;

function correlationCheck(names: string[], matrix: number[][]): CorrelationCheck {
  const issues = correlationIssues({ names, matrix }, 'correlation');
  const psd = issues.find((i) => i.code === 'E_NOT_PSD');
  const shapeOk = !issues.some((i) => i.severity === 'error' && i.code !== 'E_NOT_PSD');
  const minEig = shapeOk ? minEigenvalue(matrix) : NaN;
  let nearest: CorrelationCheck['nearest'] = null;
  if (psd) {
    const near = nearestCorrelation(matrix);
    nearest = { matrix: near.matrix, distance: near.distance, converged: near.converged };
  }
  return { valid: !issues.some((i) => i.severity === 'error'), minEigenvalue: minEig, issues, nearest };
}

function marketCheck(snapshot: unknown): MarketCheck {
  try {
    const { warnings } = parseSnapshot(snapshot);
    return { valid: true, issues: warnings };
  } catch (e) {
    if (e instanceof EngineError) return { valid: false, issues: e.issues.length ? e.issues : [issueOf(e)] };
    throw e;
  }
}

function issueOf(e: EngineError): FieldIssue {
  return {
    code: e.code,
    field: 'market',
    rule: e.message,
    value: null,
    message: e.message,
    severity: 'error',
  };
}

function dealCheck(deal: unknown, rules?: RuleSettings): DealReview {
  const check = checkDeal(deal);
  if (!check.compiled) return { ...check, analysis: null, rules: null };
  const analysis: DealAnalysis = analyseDeal(check.compiled);
  return { ...check, analysis, rules: applyRules(analysis, rules ?? DEFAULT_RULE_SETTINGS) };
}

function openStudy(text: string): OpenedStudy {
  if (typeof text !== 'string') throw new EngineError('E_STUDY_TEXT', 'a study file must be text (JSON)');
  if (text.length > MAX_STUDY_TEXT)
    throw new EngineError('E_STUDY_TOO_LARGE', `the study file is larger than ${MAX_STUDY_TEXT} characters`);
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    const i = issue('E_STUDY_JSON', 'study', 'must be valid JSON', (e as Error).message.slice(0, 120));
    throw new EngineError(i.code, i.message, [i]);
  }
  const study = parseStudyFile(json);
  return { study, hash: checkStudyHash(study) };
}

/**
 * Every method the engine serves by itself. `report.render` is added by the app's worker (the engine does not
 * depend on src/report). Studies run in the thread that serves the protocol (the engine's Web Worker); the
 * runner yields between batches, so a cancel message is seen between two batches.
 */
export const engineHandlers: Omit<EngineHandlers, 'report.render'> & Partial<EngineHandlers> = {
  'engine.info': () => ({
    protocol: PROTOCOL_VERSION,
    methods: Object.keys(engineHandlers) as EngineMethod[],
  }),
  'deal.check': (a) => {
    checkArgs('deal.check', a, { deal: 'any', rules: 'object?' });
    return dealCheck(a.deal, a.rules);
  },
  'market.check': (a) => {
    checkArgs('market.check', a, { snapshot: 'any' });
    return marketCheck(a.snapshot);
  },
  'deal.checkExpression': (a) => {
    checkArgs('deal.checkExpression', a, { text: 'string', context: 'object' });
    const r = checkExpression(a.text, a.context);
    return { errors: r.errors };
  },
  'market.checkCorrelation': (a) => {
    checkArgs('market.checkCorrelation', a, { names: 'array', matrix: 'array' });
    return correlationCheck(a.names, a.matrix);
  },
  'calibration.stability': (a) => {
    checkArgs('calibration.stability', a, { snapshots: 'array', equities: 'array', currencies: 'array' });
    return calibrationStability(a.snapshots, { equities: a.equities, currencies: a.currencies });
  },
  'study.open': (a) => {
    checkArgs('study.open', a, { text: 'string' });
    return openStudy(a.text);
  },
  'study.diff': (a) => {
    checkArgs('study.diff', a, { a: 'object', b: 'object' });
    return diffStudies(a.a, a.b);
  },
  'study.run': (a, ctx) => {
    checkArgs('study.run', a, { input: 'object' });
    return runStudy(a.input, { signal: ctx.signal, onProgress: (p) => ctx.progress(p), workers: 1 });
  },
  'study.verify': async (a, ctx) => {
    checkArgs('study.verify', a, { study: 'object' });
    const r = await verifyStudy(a.study, {
      signal: ctx.signal,
      onProgress: (p) => ctx.progress(p),
      workers: 1,
    });
    return { identical: r.ok, hashOk: !r.edited, difference: r.firstDifference, message: r.message };
  },
};
