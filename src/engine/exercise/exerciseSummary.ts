/**
 * Plain-text summary of an exercise estimate for reports and command-line output: both bounds, their gap, the
 * exercise probabilities, the cost of the dual bound, the direction of each bias, and the standing caveat that the
 * numbers inform a pricing decision and do not replace model validation.
 */
import type { ExercisePricingResult } from './priceExerciseRight.ts';

/** Options of {@link exerciseSummaryLines}. */
export interface ExerciseSummaryOptions {
  /** Currency code printed after amounts (e.g. `DOM`). */
  currency: string;
  /** Significant digits of amounts (default 6). */
  digits?: number;
}

/** One line per item, in reading order. */
export function exerciseSummaryLines(
  result: ExercisePricingResult,
  options: ExerciseSummaryOptions,
): string[] {
  const d = options.digits ?? 6;
  const money = (x: number): string => `${x.toPrecision(d)} ${options.currency}`;
  const e = result.estimate;
  const holder = result.policy.holder === 'holder';
  const lines: string[] = [];
  lines.push(
    `Policy estimate (${holder ? 'lower' : 'upper'} bound): ${money(e.primal.value)} ± ${money(e.primal.se)} (1 SE, ${e.primal.nPaths} paths)`,
  );
  if (e.dual)
    lines.push(
      `Dual estimate (${holder ? 'upper' : 'lower'} bound): ${money(e.dual.value)} ± ${money(e.dual.se)}; gap ${money(e.dual.gap)} ± ${money(e.dual.gapSe)}` +
        ` (${e.dual.nOuter} outer × ${e.dual.nInner} inner paths, ${e.dual.innerPaths} inner paths in all, ${(e.dual.millis / 1000).toFixed(2)} s)`,
    );
  else lines.push('Dual estimate: not computed, so the gap between the bounds is unknown.');
  lines.push(
    'Exercise probability by date: ' +
      e.exerciseProbability
        .map((x) => `${x.time.toFixed(2)}y ${(100 * x.probability).toFixed(1)}%`)
        .join(', ') +
      `; never ${(100 * e.neverExercised).toFixed(1)}%`,
  );
  lines.push(`Regression basis: ${result.policy.basis.description}.`);
  lines.push(e.biasNote);
  lines.push(
    'These figures inform a pricing decision; they are not investment advice, and the choice of model remains ' +
      "subject to the user's model-risk policy and independent validation.",
  );
  return lines;
}
