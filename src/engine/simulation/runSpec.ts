/**
 * The plain-data description of one Monte Carlo run: what a worker receives. A payoff cannot cross a worker
 * boundary as a function, so the spec names a factory module and carries a plain description it understands.
 */
import type { PathEvaluator, PathShift, VariantSpec } from './types.ts';
import { EngineError, fail, issue, throwIfErrors, type FieldIssue } from '../errors.ts';

/** A payoff as plain data: `factory` is a module specifier (or {@link BUILTIN_TEST_PAYOFFS}). */
export interface PayoffRef {
  factory: string;
  description: unknown;
}

/** Specifier of the built-in factory of test payoffs (European call/put, zero-coupon bond, caplet, quanto forward). */
export const BUILTIN_TEST_PAYOFFS = 'factor-triage:test-payoffs';

/** What an evaluator factory sees of the variant it prices. */
export interface EvaluatorContext {
  variant: VariantSpec;
  times: Float64Array;
  /** Grid index of a time (years); throws naming `field` when it is not on the grid. */
  indexOf(t: number, field?: string): number;
}

/** A factory module: turns a plain payoff description into one evaluator per output, for one variant. */
export interface PayoffFactory {
  createEvaluators(description: unknown, context: EvaluatorContext): PathEvaluator[];
  /** Optional: times (years) the description observes or pays, added to the grid. */
  eventTimes?(description: unknown): number[];
}

/** A control variate: `control` (a payoff output) has the exact price `known[variantId]` under each variant. */
export interface ControlSpec {
  /** Payoff output to improve. */
  target: number;
  /** Payoff output used as control. */
  control: number;
  /** Exact price of the control per variant id (base scenario). */
  known: Record<string, number>;
}

/** One Monte Carlo run over several variants and scenarios on common random numbers. */
export interface RunSpec {
  variants: VariantSpec[];
  /** Path shifts evaluated on every variant's paths; default one base scenario `{}`. */
  scenarios?: PathShift[];
  payoff: PayoffRef;
  grid: {
    /** Times the payoff observes or pays (years > 0). */
    eventTimes: number[];
    /** Largest step (years). */
    maxStep: number;
  };
  /** Run seed (non-negative integer or string). */
  seed: string | number;
  /** Paths per batch (bounded memory); even when `antithetic`. Default 4096. */
  batchSize?: number;
  /** Path budget: the run stops after this many paths. */
  maxPaths: number;
  /** Antithetic pairs (path p and p + n/2 of each batch). */
  antithetic?: boolean;
  /** Stops once every listed column (default all) has a standard error at most `se` (after ≥ 2 batches). */
  targetSe?: { se: number; columns?: number[] };
  controls?: ControlSpec[];
}

/** Default paths per batch. */
export const DEFAULT_BATCH_SIZE = 4096;

/** Paths in batch `b` of a run (the last batch may be smaller). */
export function batchPaths(spec: RunSpec, b: number): number {
  const size = spec.batchSize ?? DEFAULT_BATCH_SIZE;
  return Math.max(0, Math.min(size, spec.maxPaths - b * size));
}

/** Number of batches of a run at its full budget. */
export function batchCount(spec: RunSpec): number {
  return Math.ceil(spec.maxPaths / (spec.batchSize ?? DEFAULT_BATCH_SIZE));
}

/** Checks the run settings (not the models: those are checked when variants are prepared). */
export function validateRunSpec(spec: RunSpec): void {
  const issues: FieldIssue[] = [];
  const size = spec.batchSize ?? DEFAULT_BATCH_SIZE;
  if (!(Number.isSafeInteger(spec.maxPaths) && spec.maxPaths > 0))
    issues.push(
      issue('E_BAD_PATHS', 'maxPaths', 'must be a whole number of paths > 0', spec.maxPaths, 'e.g. 100000'),
    );
  if (!(Number.isSafeInteger(size) && size > 0))
    issues.push(issue('E_BAD_BATCH', 'batchSize', 'must be a whole number of paths > 0', size, 'e.g. 4096'));
  if (spec.antithetic && (size % 2 !== 0 || spec.maxPaths % 2 !== 0))
    issues.push(
      issue('E_ANTITHETIC_ODD', 'batchSize', 'and maxPaths must be even with antithetic pairs', [
        size,
        spec.maxPaths,
      ]),
    );
  if (!(typeof spec.seed === 'string' || (Number.isSafeInteger(spec.seed) && spec.seed >= 0)))
    issues.push(issue('E_BAD_SEED', 'seed', 'must be a non-negative integer or a string', spec.seed));
  if (!Array.isArray(spec.variants) || spec.variants.length === 0)
    issues.push(issue('E_NO_VARIANTS', 'variants', 'must list at least one model variant', spec.variants));
  else {
    const ids = new Set<string>();
    spec.variants.forEach((v, i) => {
      if (ids.has(v.id)) issues.push(issue('E_DUPLICATE_ID', `variants[${i}].id`, 'must be unique', v.id));
      ids.add(v.id);
    });
  }
  if (spec.targetSe && !(Number.isFinite(spec.targetSe.se) && spec.targetSe.se > 0))
    issues.push(issue('E_BAD_TARGET', 'targetSe.se', 'must be a finite number > 0', spec.targetSe.se));
  if (!spec.payoff || typeof spec.payoff.factory !== 'string')
    issues.push(
      issue('E_NO_PAYOFF', 'payoff.factory', 'must name a payoff factory module', spec.payoff?.factory),
    );
  throwIfErrors(issues);
  if (!spec.grid) fail('E_NO_GRID', 'grid', 'must give eventTimes and maxStep', spec.grid);
}

/** Column labels of a run: column = ((variant · nScenarios) + scenario) · nOutputs + output. */
export interface ColumnLabel {
  variant: string;
  scenario: number;
  output: number;
}

/** Index of a column. */
export function columnIndex(
  shape: { variants: number; scenarios: number; outputs: number },
  variant: number,
  scenario: number,
  output: number,
): number {
  if (variant >= shape.variants || scenario >= shape.scenarios || output >= shape.outputs)
    throw new EngineError(
      'E_COLUMN',
      `no column for variant ${variant}, scenario ${scenario}, output ${output}`,
    );
  return (variant * shape.scenarios + scenario) * shape.outputs + output;
}
