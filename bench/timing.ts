/** Shared timing helpers for benchmarks: best-of-N wall time, ratios to a baseline measured in the same run. */

/** Runs `fn` repeatedly for at least `minMs`, `rounds` times, and returns the best time per call in seconds. */
export function timePerCall(fn: () => unknown, minMs = 200, rounds = 5): number {
  let best = Infinity;
  let sink = 0;
  for (let r = 0; r < rounds; r++) {
    let n = 0;
    const t0 = performance.now();
    let t1 = t0;
    while (t1 - t0 < minMs) {
      const v = fn();
      if (typeof v === 'number') sink += v;
      n++;
      t1 = performance.now();
    }
    best = Math.min(best, (t1 - t0) / n / 1000);
  }
  if (sink === 42.4242) console.log('');
  return best;
}

/** Formats seconds in a readable unit. */
export function fmtTime(s: number): string {
  if (s < 1e-6) return `${(s * 1e9).toFixed(1)} ns`;
  if (s < 1e-3) return `${(s * 1e6).toFixed(2)} µs`;
  if (s < 1) return `${(s * 1e3).toFixed(2)} ms`;
  return `${s.toFixed(2)} s`;
}

/** One line: name, time, ratio to baseline, target and whether it is met. */
export function report(
  name: string,
  seconds: number,
  baseline: number,
  target?: { seconds: number },
): string {
  const ratio = seconds / baseline;
  const t = target
    ? `  target < ${fmtTime(target.seconds)}: ${seconds < target.seconds ? 'met' : 'NOT met'}`
    : '';
  return `${name.padEnd(48)} ${fmtTime(seconds).padStart(11)}   ${ratio.toFixed(2).padStart(8)} x baseline${t}`;
}
