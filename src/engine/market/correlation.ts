/**
 * Correlation matrices over named drivers (`eq:ALDR`, `var:ALDR`, `rate:DOM`, `fx:ASH/DOM`): validation and
 * sub-matrices. A matrix that is not positive semi-definite is rejected with the nearest correlation matrix
 * (Higham 2002, see ../math/linalg.ts) offered in the issue, never silently changed.
 */
import { EngineError, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import { minEigenvalue, nearestCorrelation, notPsdIssue } from '../math/linalg.ts';

/** A correlation matrix with its driver names (rows and columns in the order of `names`). */
export interface CorrelationSpec {
  names: string[];
  matrix: number[][];
}

const SYMMETRY_TOL = 1e-12;
const PSD_TOL = 1e-12;

/** Every problem with a correlation spec: errors (shape, range, symmetry, PSD) and warnings (perfect correlation, near-singular). */
export function correlationIssues(spec: CorrelationSpec, field = 'correlation'): FieldIssue[] {
  const out: FieldIssue[] = [];
  const names = spec?.names;
  if (!Array.isArray(names) || names.length === 0) {
    out.push(issue('E_CORRELATION_NAMES', `${field}.names`, 'must list the driver names', names));
    return out;
  }
  const index = new Map<string, number>();
  names.forEach((nm, i) => {
    if (typeof nm !== 'string' || nm.length === 0)
      out.push(
        issue('E_CORRELATION_NAMES', `${field}.names[${i}]`, 'must be a driver name such as eq:ALDR', nm),
      );
    else if (index.has(nm))
      out.push(
        issue(
          'E_CORRELATION_DUPLICATE',
          `${field}.names[${i}]`,
          `must not repeat names[${index.get(nm)}]`,
          nm,
        ),
      );
    else index.set(nm, i);
  });
  const n = names.length;
  const m = spec.matrix;
  if (!Array.isArray(m) || m.length !== n) {
    out.push(
      issue(
        'E_CORRELATION_SHAPE',
        `${field}.matrix`,
        `must have ${n} rows, one per name`,
        Array.isArray(m) ? m.length : m,
      ),
    );
    return out;
  }
  let shapeOk = true;
  for (let i = 0; i < n; i++) {
    const row = m[i];
    if (!Array.isArray(row) || row.length !== n) {
      out.push(
        issue(
          'E_CORRELATION_SHAPE',
          `${field}.matrix[${i}]`,
          `must have ${n} entries`,
          Array.isArray(row) ? row.length : row,
        ),
      );
      shapeOk = false;
      continue;
    }
    for (let j = 0; j < n; j++) {
      const v = row[j];
      const cell = `${field}.matrix[${i}][${j}]`;
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        out.push(issue('E_NOT_FINITE', cell, 'must be a finite number', v));
        shapeOk = false;
      } else if (i === j && v !== 1) {
        out.push(
          issue(
            'E_CORRELATION_DIAGONAL',
            cell,
            'must be 1 (a driver is perfectly correlated with itself)',
            v,
          ),
        );
        shapeOk = false;
      } else if (v < -1 || v > 1) {
        out.push(issue('E_CORRELATION_RANGE', cell, 'must be a correlation in [-1, 1]', v));
        shapeOk = false;
      }
    }
  }
  if (!shapeOk) return out;
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      if (Math.abs(m[i]![j]! - m[j]![i]!) > SYMMETRY_TOL) {
        out.push(
          issue(
            'E_CORRELATION_SYMMETRY',
            `${field}.matrix[${i}][${j}]`,
            `must equal matrix[${j}][${i}] = ${m[j]![i]} (${names[i]} vs ${names[j]})`,
            m[i]![j],
            'enter each correlation once and mirror it',
          ),
        );
        shapeOk = false;
      } else if (Math.abs(m[i]![j]!) === 1) {
        out.push(
          issue(
            'W_CORRELATION_PERFECT',
            `${field}.matrix[${i}][${j}]`,
            `makes ${names[i]} and ${names[j]} perfectly correlated (the matrix is singular)`,
            m[i]![j],
            'one of the two drivers is redundant; simulation still works (zero Cholesky pivot)',
            'warning',
          ),
        );
      }
    }
  if (!shapeOk) return out;
  const minEig = minEigenvalue(m);
  if (minEig < -PSD_TOL) {
    const nearest = nearestCorrelation(m).matrix;
    out.push(notPsdIssue(`${field}.matrix`, minEig, nearest, 'the nearest correlation matrix (Higham 2002)'));
  } else if (minEig < 1e-8 && !out.some((i) => i.code === 'W_CORRELATION_PERFECT'))
    out.push(
      issue(
        'W_CORRELATION_SINGULAR',
        `${field}.matrix`,
        'is nearly singular (smallest eigenvalue below 1e-8)',
        minEig,
        'some drivers are almost linear combinations of others',
        'warning',
      ),
    );
  return out;
}

/**
 * Validates a correlation spec: square, symmetric, unit diagonal, entries in [−1, 1], positive semi-definite.
 * Throws EngineError (code of the first error, e.g. `E_NOT_PSD` with `{ minEigenvalue, nearest }` as the issue
 * value) listing all issues; returns the warnings otherwise.
 */
export function validateCorrelation(spec: CorrelationSpec, field = 'correlation'): FieldIssue[] {
  return throwIfErrors(correlationIssues(spec, field), 'E_CORRELATION');
}

/** The sub-matrix of the drivers `names`, in that order. Throws naming a driver missing from the spec. */
export function subMatrix(spec: CorrelationSpec, names: string[], field = 'correlation'): CorrelationSpec {
  const idx = names.map((nm) => {
    const i = spec.names.indexOf(nm);
    if (i < 0)
      throw new EngineError('E_CORRELATION_MISSING', `${field}.names must include ${JSON.stringify(nm)}`, [
        issue(
          'E_CORRELATION_MISSING',
          `${field}.names`,
          `must include the driver ${nm}`,
          spec.names,
          `add a row and column for ${nm}`,
        ),
      ]);
    return i;
  });
  return { names: names.slice(), matrix: idx.map((i) => idx.map((j) => spec.matrix[i]![j]!)) };
}

/** Correlation between two named drivers; 1 for a driver with itself. */
export function correlationOf(spec: CorrelationSpec, a: string, b: string, field = 'correlation'): number {
  const s = subMatrix(spec, [a, b], field);
  return s.matrix[0]![1]!;
}
