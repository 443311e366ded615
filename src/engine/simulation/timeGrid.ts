/**
 * Simulation time grid: the union of every time the payoff observes or pays (and every time a model parameter
 * changes), refined so that no step exceeds `maxStep`; each event time keeps its index on the grid.
 */
import { EngineError, fail, issue, throwIfErrors, type FieldIssue } from '../errors.ts';

/** A simulation grid in years, times[0] = 0. */
export interface TimeGrid {
  readonly times: Float64Array;
  /** eventIndex[i] is the grid index of eventTimes[i] (as passed to {@link makeTimeGrid}). */
  readonly eventIndex: readonly number[];
  /** Grid index of time `t` (years); throws an EngineError naming `field` when `t` is not on the grid. */
  indexOf(t: number, field?: string): number;
}

/** Two times closer than this (years, about 3 ms) are the same grid point. */
export const GRID_TOLERANCE = 1e-10;

/** Grid index of `t` in sorted `times` within {@link GRID_TOLERANCE}, or −1. */
export function findTime(times: ArrayLike<number>, t: number): number {
  let lo = 0;
  let hi = times.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const v = times[mid]!;
    if (Math.abs(v - t) <= GRID_TOLERANCE) return mid;
    if (v < t) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/**
 * Builds the grid. `eventTimes` (years, > 0, any order, duplicates allowed) are kept exactly; `extraTimes`
 * (e.g. the ends of piecewise-constant parameters) are added when they fall inside the horizon; every gap is then
 * split into equal steps no longer than `maxStep` (years).
 *
 * Errors (EngineError, naming the setting): no event time, an event time that is not a finite number > 0,
 * `maxStep` not a finite number > 0, or `maxStep` larger than the horizon (the last event time).
 */
export function makeTimeGrid(
  eventTimes: readonly number[],
  maxStep: number,
  extraTimes: readonly number[] = [],
): TimeGrid {
  const issues: FieldIssue[] = [];
  if (!Array.isArray(eventTimes) || eventTimes.length === 0)
    fail('E_NO_EVENT_TIMES', 'grid.eventTimes', 'must list at least one time > 0 (years)', eventTimes);
  eventTimes.forEach((t, i) => {
    if (!(typeof t === 'number' && Number.isFinite(t) && t > 0))
      issues.push(issue('E_BAD_TIME', `grid.eventTimes[${i}]`, 'must be a finite number of years > 0', t));
  });
  if (!(typeof maxStep === 'number' && Number.isFinite(maxStep) && maxStep > 0))
    issues.push(
      issue('E_BAD_STEP', 'grid.maxStep', 'must be a finite number of years > 0', maxStep, 'e.g. 0.25'),
    );
  throwIfErrors(issues);
  const horizon = Math.max(...eventTimes);
  if (maxStep > horizon + GRID_TOLERANCE)
    fail(
      'E_STEP_TOO_LARGE',
      'grid.maxStep',
      `must not exceed the horizon ${horizon} years`,
      maxStep,
      `use a step of at most ${horizon}`,
    );
  const pts = [0, ...eventTimes, ...extraTimes.filter((t) => Number.isFinite(t) && t > 0 && t < horizon)];
  pts.sort((x, y) => x - y);
  const knots: number[] = [];
  for (const t of pts) if (knots.length === 0 || t - knots[knots.length - 1]! > GRID_TOLERANCE) knots.push(t);
  const out: number[] = [0];
  for (let i = 1; i < knots.length; i++) {
    const t0 = knots[i - 1]!;
    const t1 = knots[i]!;
    const n = Math.max(1, Math.ceil((t1 - t0) / maxStep - 1e-9));
    for (let j = 1; j < n; j++) out.push(t0 + ((t1 - t0) * j) / n);
    out.push(t1);
  }
  const times = Float64Array.from(out);
  const indexOf = (t: number, field = 'time'): number => {
    const k = findTime(times, t);
    if (k < 0)
      throw new EngineError(
        'E_TIME_NOT_ON_GRID',
        `${field} ${t} is not a simulation grid time: add it to grid.eventTimes`,
        [
          issue(
            'E_TIME_NOT_ON_GRID',
            field,
            'must be one of grid.eventTimes',
            t,
            'add it to grid.eventTimes',
          ),
        ],
      );
    return k;
  };
  return { times, eventIndex: eventTimes.map((t) => findTime(times, t)), indexOf };
}
