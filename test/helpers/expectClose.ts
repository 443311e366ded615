import { expect } from 'vitest';

/**
 * Checks |computed − expected| ≤ tol (absolute). A failure names the check and prints expected, computed, the
 * difference and the tolerance.
 */
export function expectClose(label: string, computed: number, expected: number, tol: number): void {
  const ok = Math.abs(computed - expected) <= tol;
  if (!ok)
    throw new Error(
      `${label}: expected ${expected}, computed ${computed}, |diff| ${Math.abs(computed - expected)} > tol ${tol}`,
    );
  expect(ok).toBe(true);
}
