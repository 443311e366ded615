/**
 * Wall-clock reading for the `seconds` fields of the calibration reports: `performance.now()` where the host has it
 * (Node, browsers, workers), else `Date.now()`. Milliseconds; only differences are meaningful.
 */
export function nowMs(): number {
  return typeof performance !== 'undefined' ? performance.now() : Date.now();
}
