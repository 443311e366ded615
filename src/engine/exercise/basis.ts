/**
 * Regression basis for continuation values: every monomial of total degree ≤ d in the standardised state
 * z_v = (x_v − mean_v) / scale_v, cross terms included, optionally with the standardised exercise value as one more
 * term. Longstaff & Schwartz (2001, RFS 14(1), Sec. 2 and Sec. 8 on the choice of basis) show that simple
 * polynomials serve as well as weighted Laguerre polynomials; standardising keeps the design well conditioned.
 * The same basis is used by every model variant wherever its state variable exists, so policy quality does not
 * differ between variants by construction.
 */
import { fail } from '../errors.ts';
import type { BasisSpec, BasisTerm } from './types.ts';

/** All exponent vectors of length `nVars` with total degree ≤ `degree`, ordered by degree, then lexicographically. */
function monomials(nVars: number, degree: number): number[][] {
  const out: number[][] = [];
  for (let d = 0; d <= degree; d++) {
    const rec = (prefix: number[], left: number, v: number): void => {
      if (v === nVars - 1) {
        out.push([...prefix, left]);
        return;
      }
      for (let e = left; e >= 0; e--) rec([...prefix, e], left - e, v + 1);
    };
    if (nVars === 0) {
      if (d === 0) out.push([]);
    } else rec([], d, 0);
  }
  return out;
}

function termLabel(exponents: number[], names: string[]): string {
  const parts: string[] = [];
  exponents.forEach((e, v) => {
    if (e === 1) parts.push(`z(${names[v]})`);
    else if (e > 1) parts.push(`z(${names[v]})^${e}`);
  });
  return parts.length === 0 ? '1' : parts.join('·');
}

/**
 * Builds the polynomial basis over the named state variables.
 * @param stateNames names of the state variables (e.g. `eq:ALDR`, `var:ALDR`, `rate:DOM`).
 * @param degree highest total degree, 0 … 3 (default 2).
 * @param includeExerciseValue add the standardised exercise value as an extra regressor (default false).
 */
export function polynomialBasis(stateNames: string[], degree = 2, includeExerciseValue = false): BasisSpec {
  if (!Number.isInteger(degree) || degree < 0 || degree > 3)
    fail('E_BASIS_DEGREE', 'exercise.basis.degree', 'must be an integer 0, 1, 2 or 3', degree);
  if (new Set(stateNames).size !== stateNames.length)
    fail('E_BASIS_NAMES', 'exercise.stateNames', 'must not repeat a name', stateNames);
  const terms: BasisTerm[] = monomials(stateNames.length, degree).map((exponents) => ({
    exponents,
    label: termLabel(exponents, stateNames),
  }));
  const description =
    `all monomials of total degree ≤ ${degree} in the standardised state (${stateNames.join(', ') || 'none'}), ` +
    `cross terms included: ${terms.length} terms` +
    (includeExerciseValue ? ', plus the standardised exercise value' : '') +
    '; each variable standardised per date by its mean and standard deviation over the regression paths';
  return {
    kind: 'polynomial',
    degree,
    stateNames: [...stateNames],
    terms,
    includeExerciseValue,
    description,
  };
}

/**
 * Writes term `t` of the basis for all paths of one date into `out`.
 * @param z standardised state, `z[v]` a Float64Array over paths (ignored for variables with zero exponent).
 */
export function evalTerm(term: BasisTerm, z: Float64Array[], out: Float64Array): void {
  out.fill(1);
  term.exponents.forEach((e, v) => {
    if (e === 0) return;
    const zv = z[v]!;
    for (let p = 0; p < out.length; p++) {
      let f = zv[p]!;
      if (e === 2) f *= f;
      else if (e === 3) f = f * f * f;
      out[p] = out[p]! * f;
    }
  });
}
