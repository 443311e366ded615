/**
 * The engine's implementation of every protocol method: thin adapters from the protocol's plain
 * arguments to the engine's own entry points (no engine logic lives here).
 */
import { EngineError, issue, type FieldIssue } from '../errors.ts';
import { checkDeal } from '../deal/compileDeal.ts';
import { checkExpression } from '../deal/checkExpression.ts';
import { minEigenvalue, nearestCorrelation, notPsdIssue, isPsd } from '../math/linalg.ts';
import { parseStudyFile, checkStudyHash } from '../study/savedStudy.ts';
import {
  PROTOCOL_VERSION,
  type CorrelationCheck,
  type EngineHandlers,
  type EngineMethod,
  type OpenedStudy,
} from './protocol.ts';

/** Largest study file the engine reads (characters). */
export const MAX_STUDY_TEXT = 64 * 1024 * 1024;

function correlationCheck(names: string[], matrix: number[][]): CorrelationCheck {
  const issues: FieldIssue[] = [];
  const n = names.length;
  if (
    !Array.isArray(matrix) ||
    matrix.length !== n ||
    matrix.some((r) => !Array.isArray(r) || r.length !== n)
  ) {
    issues.push(
      issue(
        'E_CORRELATION_SHAPE',
        'correlation.matrix',
        `must be ${n} × ${n} (one row and column per driver)`,
        matrix,
      ),
    );
    return { valid: false, minEigenvalue: NaN, issues, nearest: null };
  }
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const v = matrix[i]![j]!;
      const field = `correlation.matrix[${i}][${j}]`;
      if (!(typeof v === 'number' && Number.isFinite(v)))
        issues.push(
          issue('E_NOT_FINITE', field, 'must be a finite number', v, `${names[i]} with ${names[j]}`),
        );
      else if (i === j && v !== 1)
        issues.push(issue('E_CORRELATION_DIAGONAL', field, 'must be 1 (a driver with itself)', v));
      else if (v < -1 || v > 1)
        issues.push(issue('E_CORRELATION_RANGE', field, 'must be a correlation in [-1, 1]', v));
      else if (j > i && matrix[j]![i] !== v)
        issues.push(
          issue(
            'E_CORRELATION_SYMMETRY',
            field,
            `must equal correlation.matrix[${j}][${i}] (${String(matrix[j]![i])})`,
            v,
            'the matrix must be symmetric',
          ),
        );
    }
  if (issues.length > 0) return { valid: false, minEigenvalue: NaN, issues, nearest: null };
  const minEig = minEigenvalue(matrix);
  if (isPsd(matrix)) return { valid: true, minEigenvalue: minEig, issues, nearest: null };
  const near = nearestCorrelation(matrix);
  issues.push(
    notPsdIssue('correlation.matrix', minEig, near.matrix, 'the nearest correlation matrix (Higham 2002)'),
  );
  return {
    valid: false,
    minEigenvalue: minEig,
    issues,
    nearest: { matrix: near.matrix, distance: near.distance, converged: near.converged },
  };
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

/** Every method this build serves. */
export const engineHandlers: EngineHandlers = {
  'engine.info': () => ({
    protocol: PROTOCOL_VERSION,
    methods: Object.keys(engineHandlers) as EngineMethod[],
  }),
  'deal.check': ({ deal }) => checkDeal(deal),
  'deal.checkExpression': ({ text, context }) => {
    const r = checkExpression(text, context);
    return { errors: r.errors };
  },
  'market.checkCorrelation': ({ names, matrix }) => correlationCheck(names, matrix),
  'study.open': ({ text }) => openStudy(text),
};
