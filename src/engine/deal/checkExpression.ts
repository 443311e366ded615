/**
 * The payoff language, front end: text is parsed with mathjs (parser only) and the tree is checked against a
 * whitelist of node types, operators, functions and symbols before anything runs. The result is a small checked
 * tree of our own (`CheckedExpr`), plain data, which `compileDeal` lowers to a program. This is the only module of
 * the deal layer that imports mathjs; evaluation never does.
 *
 * Language summary (see `LANGUAGE_FUNCTIONS`):
 *   numbers, true/false; + - * / ^; < <= > >= == !=; and or not; `cond ? a : b`;
 *   bare names: an equity or FX id (level at the event date), a parameter, a state variable, and
 *   t (event time, years), dt (year fraction since the schedule's previous date), index (1-based), count;
 *   functions: min max abs exp log sqrt floor clamp; start perf lowest highest average;
 *   short_rate fixing term_rate swap_rate bond.
 */
import { create, parseDependencies } from 'mathjs';
import type { BinaryFn, UnaryFn } from './types.ts';

const { parse } = create({ parseDependencies });

/** Longest accepted expression (characters). */
export const MAX_EXPRESSION_LENGTH = 1000;
/** Deepest accepted nesting (brackets in the text, and depth of the checked tree). */
export const MAX_EXPRESSION_DEPTH = 32;

/** What a name stands for inside an expression. */
export type SymbolKind = 'equity' | 'fx' | 'parameter' | 'state' | 'schedule' | 'rateCurrency';

/** Names known to an expression, and where it lives (for error messages). */
export interface ExpressionContext {
  /** Field path of the expression, e.g. `deal.events[2].pay[0].amount`. */
  field: string;
  symbols: Record<string, SymbolKind>;
}

/** One problem in an expression, with its 0-based character range in the text. */
export interface ExpressionError {
  code: string;
  field: string;
  /** 0-based index of the first offending character. */
  start: number;
  /** 0-based index just after the offending text. */
  end: number;
  message: string;
}

/** A checked expression: plain data, only whitelisted constructs. */
export type CheckedExpr =
  | { k: 'num'; value: number }
  | { k: 'sym'; name: string; kind: 'equity' | 'fx' | 'parameter' | 'state' | 'builtin' }
  | { k: 'unary'; fn: UnaryFn; a: CheckedExpr }
  | { k: 'binary'; fn: BinaryFn; a: CheckedExpr; b: CheckedExpr }
  | { k: 'call'; fn: LanguageFunction; args: CheckedExpr[]; names: string[] }
  | { k: 'cond'; c: CheckedExpr; a: CheckedExpr; b: CheckedExpr };

export interface CheckResult {
  errors: ExpressionError[];
  /** Present when there are no errors. */
  tree?: CheckedExpr;
}

/** Built-in names readable in every expression. */
export const BUILTIN_SYMBOLS = ['t', 'dt', 'index', 'count'] as const;

/** Argument kinds of the language's functions: a number, a constant (numbers and parameters only) or a name. */
type Arg = 'num' | 'const' | 'underlying' | 'schedule' | 'rateCurrency';

interface Signature {
  args: Arg[];
  /** Number of trailing optional arguments. */
  optional?: number;
  /** Any count >= 1 of `args[0]`. */
  variadic?: boolean;
  help: string;
}

/** The language's functions and their arguments. */
export const LANGUAGE_FUNCTIONS = {
  min: { args: ['num'], variadic: true, help: 'min(a, b, ...): smallest argument' },
  max: { args: ['num'], variadic: true, help: 'max(a, b, ...): largest argument' },
  abs: { args: ['num'], help: 'abs(x)' },
  exp: { args: ['num'], help: 'exp(x)' },
  log: { args: ['num'], help: 'log(x): natural logarithm' },
  sqrt: { args: ['num'], help: 'sqrt(x)' },
  floor: { args: ['num'], help: 'floor(x)' },
  clamp: { args: ['num', 'num', 'num'], help: 'clamp(x, low, high) = min(max(x, low), high)' },
  start: { args: ['underlying'], help: 'start(U): level of U on the valuation date' },
  perf: { args: ['underlying'], help: 'perf(U) = U / start(U)' },
  lowest: {
    args: ['underlying', 'schedule'],
    optional: 1,
    help: 'lowest(U, S): minimum of U over the dates of schedule S up to now (without S: every simulation step)',
  },
  highest: { args: ['underlying', 'schedule'], optional: 1, help: 'highest(U, S): maximum, as lowest' },
  average: {
    args: ['underlying', 'schedule'],
    optional: 1,
    help: 'average(U, S): arithmetic mean, as lowest',
  },
  short_rate: { args: ['rateCurrency'], help: 'short_rate(C): short rate of currency C now' },
  fixing: {
    args: ['rateCurrency', 'const'],
    optional: 1,
    help: 'fixing(C, tau): simple rate over [t - tau, t], fixed at t - tau (paid now: its natural date); fixing(C): over the period since the previous date of the schedule',
  },
  term_rate: {
    args: ['rateCurrency', 'const'],
    help: 'term_rate(C, tau): simple rate over [t, t + tau] fixed now',
  },
  swap_rate: {
    args: ['rateCurrency', 'const', 'const'],
    help: 'swap_rate(C, years, perYear): par swap rate now, fixed leg paid perYear times a year',
  },
  bond: {
    args: ['rateCurrency', 'const'],
    help: 'bond(C, T): zero-coupon bond price P(t, T) now, T in years or a date parameter',
  },
} as const satisfies Record<string, Signature>;

export type LanguageFunction = keyof typeof LANGUAGE_FUNCTIONS;

const OPERATORS: Record<string, UnaryFn | BinaryFn> = {
  add: 'add',
  subtract: 'sub',
  multiply: 'mul',
  divide: 'div',
  pow: 'pow',
  smaller: 'lt',
  smallerEq: 'le',
  larger: 'gt',
  largerEq: 'ge',
  equal: 'eq',
  unequal: 'ne',
  and: 'and',
  or: 'or',
};

const UNARY_FUNCTIONS: Record<string, UnaryFn> = {
  abs: 'abs',
  exp: 'exp',
  log: 'log',
  sqrt: 'sqrt',
  floor: 'floor',
};

/** Names that may never be used as identifiers (JavaScript object internals), whatever the deal declares. */
export const RESERVED_NAMES = new Set<string>([
  ...BUILTIN_SYMBOLS,
  ...Object.keys(LANGUAGE_FUNCTIONS),
  'constructor',
  'prototype',
  'toString',
  'valueOf',
  'hasOwnProperty',
  'isPrototypeOf',
  'propertyIsEnumerable',
  'toLocaleString',
  'true',
  'false',
  'and',
  'or',
  'not',
]);

const hasOwn = (o: object, k: string): boolean => Object.prototype.hasOwnProperty.call(o, k);

class Checker {
  readonly errors: ExpressionError[] = [];
  constructor(
    readonly text: string,
    readonly ctx: ExpressionContext,
  ) {}

  /** Position of the first whole-word occurrence of `name` (or of the text when absent). */
  locate(name: string): [number, number] {
    if (name.length > 0) {
      let from = 0;
      for (;;) {
        const i = this.text.indexOf(name, from);
        if (i < 0) break;
        const before = i > 0 ? this.text[i - 1]! : ' ';
        const after = this.text[i + name.length] ?? ' ';
        if (!/[A-Za-z0-9_]/.test(before) && !/[A-Za-z0-9_]/.test(after)) return [i, i + name.length];
        from = i + 1;
      }
      const j = this.text.indexOf(name);
      if (j >= 0) return [j, j + name.length];
    }
    return [0, this.text.length];
  }

  err(code: string, at: string | [number, number], what: string): void {
    const [start, end] = typeof at === 'string' ? this.locate(at) : at;
    this.errors.push({
      code,
      field: this.ctx.field,
      start,
      end,
      message: `${this.ctx.field}, character ${start + 1}: ${what}`,
    });
  }

  kindOf(name: string): SymbolKind | undefined {
    return hasOwn(this.ctx.symbols, name) ? this.ctx.symbols[name] : undefined;
  }

  node(n: MathNode, depth: number): CheckedExpr | null {
    if (depth > MAX_EXPRESSION_DEPTH) {
      this.err(
        'E_EXPR_TOO_DEEP',
        [0, this.text.length],
        `nesting deeper than ${MAX_EXPRESSION_DEPTH} levels: split the formula using parameters or state`,
      );
      return null;
    }
    switch (n.type) {
      case 'ParenthesisNode':
        return this.node(n.content as MathNode, depth + 1);
      case 'ConstantNode': {
        const v = n.value;
        if (typeof v === 'number' && Number.isFinite(v)) return { k: 'num', value: v };
        if (typeof v === 'boolean') return { k: 'num', value: v ? 1 : 0 };
        if (typeof v === 'string') {
          const q = Math.max(this.text.indexOf('"'), this.text.indexOf("'"));
          this.err(
            'E_EXPR_STRING',
            q >= 0 ? [q, q + 1] : [0, this.text.length],
            'text strings are not part of the language: write numbers and names',
          );
        } else
          this.err(
            'E_EXPR_CONSTANT',
            String(v),
            `the constant ${String(v)} is not allowed: write a finite number`,
          );
        return null;
      }
      case 'SymbolNode':
        return this.symbol(String(n.name));
      case 'OperatorNode':
        return this.operator(n, depth);
      case 'ConditionalNode': {
        const c = this.node(n.condition as MathNode, depth + 1);
        const a = this.node(n.trueExpr as MathNode, depth + 1);
        const b = this.node(n.falseExpr as MathNode, depth + 1);
        return c && a && b ? { k: 'cond', c, a, b } : null;
      }
      case 'FunctionNode':
        return this.call(n, depth);
      case 'AccessorNode':
      case 'IndexNode': {
        const i = this.text.search(/[.[]/);
        this.err(
          'E_EXPR_PROPERTY',
          i >= 0 ? [i, i + 1] : [0, this.text.length],
          'property access and indexing (. or [ ]) are not allowed',
        );
        return null;
      }
      case 'AssignmentNode':
      case 'FunctionAssignmentNode': {
        const i = this.text.indexOf('=');
        this.err(
          'E_EXPR_ASSIGNMENT',
          i >= 0 ? [i, i + 1] : [0, this.text.length],
          'definitions and assignments are not allowed here: change state with the event\'s "set" field',
        );
        return null;
      }
      case 'RelationalNode':
        this.err(
          'E_EXPR_CHAINED_COMPARISON',
          [0, this.text.length],
          'chained comparisons such as a < b < c are not allowed: write (a < b) and (b < c)',
        );
        return null;
      case 'ArrayNode':
      case 'ObjectNode':
      case 'RangeNode': {
        const i = this.text.search(/[[{:]/);
        this.err(
          'E_EXPR_MATRIX',
          i >= 0 ? [i, i + 1] : [0, this.text.length],
          'matrices, ranges and objects are not part of the language: every value is one number per path',
        );
        return null;
      }
      case 'BlockNode': {
        const i = this.text.search(/[;\n]/);
        this.err(
          'E_EXPR_BLOCK',
          i >= 0 ? [i, i + 1] : [0, this.text.length],
          'one expression per field: several statements (; or new lines) are not allowed',
        );
        return null;
      }
      default:
        this.err(
          'E_EXPR_NODE',
          [0, this.text.length],
          `the construct ${String(n.type)} is not part of the language`,
        );
        return null;
    }
  }

  symbol(name: string): CheckedExpr | null {
    if ((BUILTIN_SYMBOLS as readonly string[]).includes(name)) return { k: 'sym', name, kind: 'builtin' };
    const kind = this.kindOf(name);
    if (kind === 'equity' || kind === 'fx' || kind === 'parameter' || kind === 'state')
      return { k: 'sym', name, kind };
    if (kind === 'schedule')
      this.err(
        'E_EXPR_SCHEDULE_AS_VALUE',
        name,
        `${name} is a schedule, usable only inside lowest, highest or average`,
      );
    else if (kind === 'rateCurrency')
      this.err(
        'E_EXPR_CURRENCY_AS_VALUE',
        name,
        `${name} is a currency: read its rates with short_rate(${name}), fixing(${name}, tau), ...`,
      );
    else if (hasOwn(LANGUAGE_FUNCTIONS, name))
      this.err('E_EXPR_FUNCTION_AS_VALUE', name, `${name} is a function: call it with arguments`);
    else
      this.err(
        'E_EXPR_UNKNOWN_NAME',
        name,
        `unknown name ${name}: declare it as an underlying, parameter or state variable`,
      );
    return null;
  }

  operator(n: MathNode, depth: number): CheckedExpr | null {
    const fn = String(n.fn);
    const args = (n.args as MathNode[] | undefined) ?? [];
    if (fn === 'multiply' && n.implicit) {
      this.err(
        'E_EXPR_IMPLICIT_MULTIPLY',
        [0, this.text.length],
        'write multiplication with * (implicit products and units such as "5 cm" are not allowed)',
      );
      return null;
    }
    if (fn === 'unaryMinus' || fn === 'unaryPlus' || fn === 'not') {
      const a = this.node(args[0]!, depth + 1);
      if (!a) return null;
      return fn === 'unaryPlus' ? a : { k: 'unary', fn: fn === 'not' ? 'not' : 'neg', a };
    }
    const mapped = hasOwn(OPERATORS, fn) ? OPERATORS[fn] : undefined;
    if (!mapped || args.length !== 2) {
      const op = String(n.op ?? fn);
      this.err(
        'E_EXPR_OPERATOR',
        op,
        `the operator ${op} is not part of the language (allowed: + - * / ^ < <= > >= == != and or not ? :)`,
      );
      return null;
    }
    const a = this.node(args[0]!, depth + 1);
    const b = this.node(args[1]!, depth + 1);
    return a && b ? { k: 'binary', fn: mapped as BinaryFn, a, b } : null;
  }

  /** A name argument (underlying, schedule, currency): a bare symbol, possibly in parentheses. */
  nameArg(n: MathNode, want: Arg, fname: string, pos: number): string | null {
    let m = n;
    while (m.type === 'ParenthesisNode') m = m.content as MathNode;
    const label =
      want === 'underlying'
        ? 'an equity or FX id'
        : want === 'schedule'
          ? 'a schedule name'
          : 'a currency listed in "rates"';
    if (m.type !== 'SymbolNode') {
      this.err('E_EXPR_ARGUMENT', fname, `argument ${pos + 1} of ${fname} must be ${label}`);
      return null;
    }
    const name = String(m.name);
    const kind = this.kindOf(name);
    const ok =
      (want === 'underlying' && (kind === 'equity' || kind === 'fx')) ||
      (want === 'schedule' && kind === 'schedule') ||
      (want === 'rateCurrency' && kind === 'rateCurrency');
    if (!ok) {
      this.err('E_EXPR_ARGUMENT', name, `argument ${pos + 1} of ${fname} must be ${label} (got ${name})`);
      return null;
    }
    return name;
  }

  isConstant(e: CheckedExpr): boolean {
    switch (e.k) {
      case 'num':
        return true;
      case 'sym':
        return e.kind === 'parameter';
      case 'unary':
        return this.isConstant(e.a);
      case 'binary':
        return this.isConstant(e.a) && this.isConstant(e.b);
      case 'call':
        return e.names.length === 0 && e.args.every((a) => this.isConstant(a));
      case 'cond':
        return this.isConstant(e.c) && this.isConstant(e.a) && this.isConstant(e.b);
    }
  }

  call(n: MathNode, depth: number): CheckedExpr | null {
    const f = n.fn as MathNode;
    if (f.type !== 'SymbolNode') {
      this.err('E_EXPR_PROPERTY', [0, this.text.length], "only the language's named functions can be called");
      return null;
    }
    const fname = String(f.name);
    if (!hasOwn(LANGUAGE_FUNCTIONS, fname)) {
      this.err(
        'E_EXPR_FUNCTION',
        fname,
        `${fname} is not a function of the language (allowed: ${Object.keys(LANGUAGE_FUNCTIONS).join(', ')})`,
      );
      return null;
    }
    const sig: Signature = LANGUAGE_FUNCTIONS[fname as LanguageFunction];
    const raw = (n.args as MathNode[] | undefined) ?? [];
    const min = sig.variadic ? 1 : sig.args.length - (sig.optional ?? 0);
    const max = sig.variadic ? 64 : sig.args.length;
    if (raw.length < min || raw.length > max) {
      this.err(
        'E_EXPR_ARITY',
        fname,
        `${fname} takes ${min === max ? min : `${min} to ${sig.variadic ? 'many' : max}`} argument(s), got ${raw.length}: ${sig.help}`,
      );
      return null;
    }
    const args: CheckedExpr[] = [];
    const names: string[] = [];
    let ok = true;
    raw.forEach((a, i) => {
      const want = sig.variadic ? sig.args[0]! : sig.args[i]!;
      if (want === 'num' || want === 'const') {
        const c = this.node(a, depth + 1);
        if (!c) ok = false;
        else if (want === 'const' && !this.isConstant(c)) {
          this.err(
            'E_EXPR_NOT_CONSTANT',
            fname,
            `argument ${i + 1} of ${fname} must be a constant (numbers and parameters only): ${sig.help}`,
          );
          ok = false;
        } else args.push(c);
      } else {
        const nm = this.nameArg(a, want, fname, i);
        if (nm === null) ok = false;
        else names.push(nm);
      }
    });
    if (!ok) return null;
    if (hasOwn(UNARY_FUNCTIONS, fname)) return { k: 'unary', fn: UNARY_FUNCTIONS[fname]!, a: args[0]! };
    return { k: 'call', fn: fname as LanguageFunction, args, names };
  }
}

/** Minimal view of a mathjs node: we read fields by name and trust nothing else about it. */
interface MathNode {
  type: string;
  [key: string]: unknown;
}

function bracketDepth(text: string): { depth: number; at: number } {
  let d = 0;
  let max = 0;
  let at = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === '(' || c === '[' || c === '{') {
      d++;
      if (d > max) {
        max = d;
        at = i;
      }
    } else if (c === ')' || c === ']' || c === '}') d--;
  }
  return { depth: max, at };
}

/**
 * Checks one payoff expression against the language. Fast enough to run on every keystroke (no evaluation).
 * Every error names the field and the character range at fault.
 */
export function checkExpression(text: string, context: ExpressionContext): CheckResult {
  const c = new Checker(text, context);
  if (typeof text !== 'string' || text.trim().length === 0) {
    c.err('E_EXPR_EMPTY', [0, 0], 'the expression is empty');
    return { errors: c.errors };
  }
  if (text.length > MAX_EXPRESSION_LENGTH) {
    c.err(
      'E_EXPR_TOO_LONG',
      [MAX_EXPRESSION_LENGTH, text.length],
      `longer than ${MAX_EXPRESSION_LENGTH} characters (${text.length}): use parameters or state variables to split it`,
    );
    return { errors: c.errors };
  }
  const q = text.search(/["'`]/);
  if (q >= 0) {
    c.err(
      'E_EXPR_STRING',
      [q, q + 1],
      'quotes are not part of the language: text strings and transposes are not allowed',
    );
    return { errors: c.errors };
  }
  const bd = bracketDepth(text);
  if (bd.depth > MAX_EXPRESSION_DEPTH) {
    c.err(
      'E_EXPR_TOO_DEEP',
      [bd.at, bd.at + 1],
      `brackets nested deeper than ${MAX_EXPRESSION_DEPTH} levels`,
    );
    return { errors: c.errors };
  }
  let root: MathNode;
  try {
    root = parse(text) as unknown as MathNode;
  } catch (e) {
    const ch = (e as { char?: number }).char;
    const pos = typeof ch === 'number' ? Math.max(0, Math.min(text.length, ch - 1)) : 0;
    const msg = (e as Error).message.replace(/\s*\(char \d+\)\s*$/, '');
    c.err('E_EXPR_SYNTAX', [pos, Math.min(text.length, pos + 1)], `syntax error: ${msg}`);
    return { errors: c.errors };
  }
  const tree = c.node(root, 0);
  if (c.errors.length > 0 || !tree) return { errors: c.errors };
  return { errors: [], tree };
}
