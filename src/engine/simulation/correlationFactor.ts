/**
 * The correlation matrix of one variant's active drivers and its lower Cholesky factor.
 */
import type { VariantSpec } from './types.ts';
import { EngineError, fail, issue, type FieldIssue } from '../errors.ts';

/** Correlation of two named drivers from the spec (missing pairs are zero). */
function lookup(v: VariantSpec, a: string, b: string): number | undefined {
  const { names, matrix } = v.correlation;
  const i = names.indexOf(a);
  const j = names.indexOf(b);
  if (i < 0 || j < 0) return undefined;
  return matrix[i]?.[j];
}

/**
 * Matrix over `drivers` (in the given order): the spec's entries, with corr(eq:S, var:S) set to the Heston ρ of S.
 * Rejects: entries outside [−1, 1] or asymmetric, a spec entry for (eq:S, var:S) that disagrees with ρ, a non-zero
 * corr(var:S, rate:C) under the QE scheme, ρ(S,v)² + ρ(S,r)² > 1 for a Heston equity under a stochastic rate.
 */
export function variantCorrelation(v: VariantSpec, drivers: readonly string[]): number[][] {
  const { names, matrix } = v.correlation;
  if (!Array.isArray(names) || !Array.isArray(matrix) || matrix.length !== names.length)
    fail(
      'E_CORRELATION_SHAPE',
      'correlation.matrix',
      `must be ${names?.length ?? 0} × ${names?.length ?? 0}`,
      matrix,
    );
  const issues: FieldIssue[] = [];
  for (let i = 0; i < names.length; i++)
    for (let j = 0; j < names.length; j++) {
      const c = matrix[i]?.[j];
      const f = `correlation.matrix[${i}][${j}]`;
      if (!(typeof c === 'number' && Number.isFinite(c) && c >= -1 && c <= 1))
        issues.push(issue('E_CORRELATION_RANGE', f, 'must be a correlation in [-1, 1]', c));
      else if (i === j && c !== 1) issues.push(issue('E_CORRELATION_DIAGONAL', f, 'must be 1', c));
      else if (Math.abs(c - (matrix[j]?.[i] ?? NaN)) > 1e-12)
        issues.push(issue('E_CORRELATION_SYMMETRY', f, `must equal correlation.matrix[${j}][${i}]`, c));
    }
  const scheme = v.hestonScheme ?? 'qe';
  const n = drivers.length;
  const m: number[][] = [];
  for (let i = 0; i < n; i++) {
    m.push([]);
    for (let j = 0; j < n; j++) m[i]!.push(i === j ? 1 : (lookup(v, drivers[i]!, drivers[j]!) ?? 0));
  }
  for (const e of v.equities) {
    if (e.dynamics.kind !== 'heston') continue;
    const i = drivers.indexOf(`eq:${e.name}`);
    const j = drivers.indexOf(`var:${e.name}`);
    const given = lookup(v, `eq:${e.name}`, `var:${e.name}`);
    if (given !== undefined && given !== 0 && Math.abs(given - e.dynamics.rho) > 1e-12)
      issues.push(
        issue(
          'E_HESTON_RHO_CONFLICT',
          `correlation eq:${e.name}|var:${e.name}`,
          `must equal the Heston rho ${e.dynamics.rho} of ${e.name} (or be left out)`,
          given,
        ),
      );
    m[i]![j] = m[j]![i] = e.dynamics.rho;
    for (let k = 0; k < n; k++) {
      const d = drivers[k]!;
      if (!d.startsWith('rate:')) continue;
      const cvr = m[j]![k]!;
      if (scheme === 'qe' && cvr !== 0)
        issues.push(
          issue(
            'E_QE_VAR_RATE_CORRELATION',
            `correlation var:${e.name}|${d}`,
            'must be 0 under the QE scheme',
            cvr,
            'set it to 0, or choose hestonScheme "euler"',
          ),
        );
      const csr = m[i]![k]!;
      if (e.dynamics.rho * e.dynamics.rho + csr * csr > 1 + 1e-12)
        issues.push(
          issue(
            'E_HYBRID_CORRELATION',
            `correlation eq:${e.name}|var:${e.name} and eq:${e.name}|${d}`,
            'must satisfy rho(S,v)^2 + rho(S,r)^2 <= 1',
            [e.dynamics.rho, csr],
            'reduce one of the two correlations',
          ),
        );
    }
  }
  const errors = issues.filter((x) => x.severity === 'error');
  if (errors.length > 0)
    throw new EngineError(errors[0]!.code, `variant ${v.id}: ${errors[0]!.message}`, issues);
  return m;
}

/**
 * Lower Cholesky factor L (row-major, n × n) with L Lᵀ = m (Cholesky–Banachiewicz; Golub & Van Loan, "Matrix
 * Computations", 4th ed. 2013, Alg. 4.2.1). A matrix that is not positive semi-definite raises E_NOT_PSD naming the
 * variant and the first driver where the factorisation fails; semi-definite directions (a zero pivot) are allowed.
 * Kept beside math/linalg's `cholesky` on purpose: on a positive definite matrix both do the same arithmetic, but this
 * one returns the flat row-major array the path generator reads, tolerates pivots down to −1e-10 (correlation
 * matrices of study variants rounded to their inputs' digits) and names the driver; switching would change which
 * near-singular variants a study accepts.
 */
export function choleskyLower(m: number[][], names: readonly string[], field: string): Float64Array {
  const n = m.length;
  const L = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = m[i]![j]!;
      for (let k = 0; k < j; k++) s -= L[i * n + k]! * L[j * n + k]!;
      if (i === j) {
        if (s < -1e-10)
          fail(
            'E_NOT_PSD',
            field,
            `must be positive semi-definite (fails at driver ${names[i]})`,
            s,
            'use the nearest valid correlation matrix (Higham 2002) offered by the market checks',
          );
        L[i * n + i] = Math.sqrt(Math.max(0, s));
      } else {
        const d = L[j * n + j]!;
        L[i * n + j] = d > 1e-14 ? s / d : 0;
      }
    }
  }
  return L;
}
