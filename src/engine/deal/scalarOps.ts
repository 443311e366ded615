/**
 * The payoff language's unary and binary operations on plain numbers, shared by constant folding and by the
 * resolution of a deal's past (the same rules the vectorised evaluator applies per path).
 */
import { exp, log, pow } from '../math/detMath.ts';

/** One unary operation of the payoff language on a number (the evaluator's per-path rule). */
export function scalarUnary(fn: string, a: number): number {
  switch (fn) {
    case 'neg':
      return -a;
    case 'not':
      return a === 0 ? 1 : 0;
    case 'abs':
      return Math.abs(a);
    case 'exp':
      return exp(a);
    case 'log':
      return log(a);
    case 'sqrt':
      return Math.sqrt(a);
    default:
      return Math.floor(a);
  }
}

/** One binary operation of the payoff language on two numbers (the evaluator's per-path rule). */
export function scalarBinary(fn: string, a: number, b: number): number {
  switch (fn) {
    case 'add':
      return a + b;
    case 'sub':
      return a - b;
    case 'mul':
      return a * b;
    case 'div':
      return a / b;
    case 'pow':
      return pow(a, b);
    case 'lt':
      return a < b ? 1 : 0;
    case 'le':
      return a <= b ? 1 : 0;
    case 'gt':
      return a > b ? 1 : 0;
    case 'ge':
      return a >= b ? 1 : 0;
    case 'eq':
      return a === b ? 1 : 0;
    case 'ne':
      return a !== b ? 1 : 0;
    case 'and':
      return a !== 0 && b !== 0 ? 1 : 0;
    default:
      return a !== 0 || b !== 0 ? 1 : 0;
  }
}
