/**
 * Judged comparisons of the cross-layer checks: each prints inputs, expected, computed and tolerance on failure.
 * Re-exports the simulation helpers of paths.ts.
 */
import { expect } from 'vitest';

export * from './paths.ts';

/**
 * Asserts |computed − expected| ≤ 3 SE + allowance and SE ≤ cap; the message carries every number.
 */
export function expectWithinSe(args: {
  label: string;
  computed: number;
  se: number;
  expected: number;
  seCap: number;
  allowance?: number;
  inputs?: unknown;
}): void {
  const allow = args.allowance ?? 0;
  const msg =
    `${args.label}: expected ${args.expected}, computed ${args.computed} ± ${args.se} ` +
    `(tolerance 3 SE + ${allow} = ${3 * args.se + allow}, SE cap ${args.seCap})` +
    (args.inputs !== undefined ? `; inputs ${JSON.stringify(args.inputs)}` : '');
  expect(Number.isFinite(args.computed), msg).toBe(true);
  expect(Math.abs(args.computed - args.expected), msg).toBeLessThanOrEqual(3 * args.se + allow);
  expect(args.se, msg).toBeLessThanOrEqual(args.seCap);
}

/** Asserts |computed − expected| ≤ tol with every number in the message (deterministic checks). */
export function expectClose(
  label: string,
  computed: number,
  expected: number,
  tol: number,
  inputs?: unknown,
) {
  const msg =
    `${label}: expected ${expected}, computed ${computed}, |diff| ${Math.abs(computed - expected)}, tolerance ${tol}` +
    (inputs !== undefined ? `; inputs ${JSON.stringify(inputs)}` : '');
  expect(Math.abs(computed - expected), msg).toBeLessThanOrEqual(tol);
}
