/**
 * Errors that cross every boundary (worker messages, the command line, the UI) as plain, cloneable data.
 * Each issue names the field at fault, the rule it broke and the value it had, so the user can fix it.
 */

/** One problem with one input field. */
export interface FieldIssue {
  /** Stable machine code, e.g. `E_NEGATIVE_VOL`, `E_NOT_PSD`. */
  code: string;
  /** Path to the field, e.g. `market.curves.EUX.pillars[3].t`. */
  field: string;
  /** The rule that was broken, in words: `must be > 0`. */
  rule: string;
  /** The offending value (made JSON-safe by the caller when needed). */
  value: unknown;
  /** A full sentence for people: names the field, the rule, the value and the fix. */
  message: string;
  /** `error` stops the computation; `warning` is reported and the computation goes on. */
  severity: 'error' | 'warning';
}

/** Plain form of an {@link EngineError}, safe for structuredClone and JSON. */
export interface PlainError {
  name: 'EngineError';
  code: string;
  message: string;
  issues: FieldIssue[];
}

/** An error raised by the engine for bad input or a failed computation. */
export class EngineError extends Error {
  readonly code: string;
  readonly issues: FieldIssue[];
  constructor(code: string, message: string, issues: FieldIssue[] = []) {
    super(message);
    this.name = 'EngineError';
    this.code = code;
    this.issues = issues;
  }
  toPlain(): PlainError {
    return { name: 'EngineError', code: this.code, message: this.message, issues: this.issues };
  }
}

function show(value: unknown): string {
  if (typeof value === 'number') return Number.isNaN(value) ? 'NaN' : String(value);
  if (typeof value === 'string') return JSON.stringify(value);
  try {
    const s = JSON.stringify(value);
    return s === undefined ? String(value) : s.length > 80 ? s.slice(0, 77) + '...' : s;
  } catch {
    return String(value);
  }
}

/** Builds an issue with a standard sentence: "<field> must be > 0 (got -0.2)". An optional hint says how to fix it. */
export function issue(
  code: string,
  field: string,
  rule: string,
  value: unknown,
  hint?: string,
  severity: 'error' | 'warning' = 'error',
): FieldIssue {
  const message = `${field} ${rule} (got ${show(value)})${hint ? `: ${hint}` : ''}`;
  return { code, field, rule, value, message, severity };
}

/** Throws an {@link EngineError} for one bad field. */
export function fail(code: string, field: string, rule: string, value: unknown, hint?: string): never {
  const i = issue(code, field, rule, value, hint);
  throw new EngineError(code, i.message, [i]);
}

/** Throws if any of the issues is an error; returns the warnings otherwise. */
export function throwIfErrors(issues: FieldIssue[], code = 'E_INVALID_INPUT'): FieldIssue[] {
  const errors = issues.filter((i) => i.severity === 'error');
  if (errors.length > 0) {
    const head = errors[0]!.message;
    const more = errors.length > 1 ? ` (and ${errors.length - 1} more)` : '';
    throw new EngineError(errors[0]!.code ?? code, head + more, issues);
  }
  return issues;
}

/** Converts anything thrown into a plain error for a message boundary. */
export function toPlainError(e: unknown): PlainError {
  if (e instanceof EngineError) return e.toPlain();
  const message = e instanceof Error ? e.message : String(e);
  return { name: 'EngineError', code: 'E_INTERNAL', message, issues: [] };
}

/** Requires a finite number > 0. */
export function requirePositive(field: string, value: number, hint?: string): number {
  if (!(typeof value === 'number' && Number.isFinite(value) && value > 0))
    fail('E_NOT_POSITIVE', field, 'must be a finite number > 0', value, hint);
  return value;
}

/** Requires a finite number >= 0. */
export function requireNonNegative(field: string, value: number, hint?: string): number {
  if (!(typeof value === 'number' && Number.isFinite(value) && value >= 0))
    fail('E_NEGATIVE', field, 'must be a finite number >= 0', value, hint);
  return value;
}

/** Requires a finite number. */
export function requireFinite(field: string, value: number, hint?: string): number {
  if (!(typeof value === 'number' && Number.isFinite(value)))
    fail('E_NOT_FINITE', field, 'must be a finite number', value, hint);
  return value;
}

/** Requires a correlation in [-1, 1]. */
export function requireCorrelation(field: string, value: number): number {
  if (!(typeof value === 'number' && Number.isFinite(value) && value >= -1 && value <= 1))
    fail('E_CORRELATION_RANGE', field, 'must be a correlation in [-1, 1]', value);
  return value;
}
