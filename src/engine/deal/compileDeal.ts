/**
 * Deal file → compiled deal: validates the shape, the names, the dates and every expression, then lowers each
 * checked expression to a plain program (`ProgramNode[]`) with parameters folded to numbers. The compiled deal is
 * structured-cloneable and carries no mathjs objects.
 */
import { EngineError, issue, type FieldIssue } from '../errors.ts';
import {
  checkExpression,
  RESERVED_NAMES,
  type CheckedExpr,
  type ExpressionContext,
  type ExpressionError,
  type SymbolKind,
} from './checkExpression.ts';
import { expandSchedule, isoDayNumber, makeBusinessCalendar, toYearFraction, WEEKDAYS } from './dealDates.ts';
import { dealShapeIssues, IDENT } from './dealSchema.ts';
import { resolvePast } from './resolvePast.ts';
import {
  COMPILED_FORMAT,
  type CompiledDeal,
  type CompiledEvent,
  type CompiledExercise,
  type CompiledPayment,
  type Conversion,
  type DealInput,
  type HistoryNeed,
  type LevelSource,
  type PaymentInput,
  type Program,
  type ProgramNode,
  type RunningSpec,
} from './types.ts';
import { scalarBinary, scalarUnary } from './scalarOps.ts';

/** Everything found while checking a deal; `compiled` is present when there is no error. */
export interface DealCheck {
  issues: FieldIssue[];
  /** Expression errors with character positions (each also appears in `issues`). */
  expressionErrors: ExpressionError[];
  compiled?: CompiledDeal;
  /**
   * For a deal under way (a date or a period before the valuation date): every past level and rate it reads, and
   * whether the file gives it. Absent for a deal that starts on or after its valuation date.
   */
  historyNeeds?: HistoryNeed[];
}

const hasOwn = (o: object, k: string): boolean => Object.prototype.hasOwnProperty.call(o, k);

/** Scalar value of a constant checked expression (numbers and parameters only). */
function foldConstant(e: CheckedExpr, params: Map<string, number>): number {
  switch (e.k) {
    case 'num':
      return e.value;
    case 'sym':
      return params.get(e.name) ?? NaN;
    case 'unary': {
      const a = foldConstant(e.a, params);
      return scalarUnary(e.fn, a);
    }
    case 'binary':
      return scalarBinary(e.fn, foldConstant(e.a, params), foldConstant(e.b, params));
    case 'cond':
      return foldConstant(e.c, params) !== 0 ? foldConstant(e.a, params) : foldConstant(e.b, params);
    case 'call': {
      const v = e.args.map((a) => foldConstant(a, params));
      if (e.fn === 'min') return Math.min(...v);
      if (e.fn === 'max') return Math.max(...v);
      if (e.fn === 'clamp') return Math.min(Math.max(v[0]!, v[1]!), v[2]!);
      return NaN;
    }
  }
}

interface Lowering {
  deal: DealInput;
  params: Map<string, number>;
  schedules: Record<string, number[]>;
  running: RunningSpec[];
  runningKeys: string[];
  gridTimes: Set<number>;
  issues: FieldIssue[];
}

function sourceOf(deal: DealInput, id: string): LevelSource {
  const u = deal.underlyings[id]!;
  return u.kind === 'equity' ? { kind: 'equity', name: id } : { kind: 'fx', units: u.units, per: u.per };
}

/** Lowers a checked expression evaluated at `times` to a program. */
function lower(L: Lowering, tree: CheckedExpr, field: string, text: string, times: number[]): Program {
  const nodes: ProgramNode[] = [];
  // Identical nodes (same operation on the same operands) are computed once: hash-consing on the plain node.
  const seen = new Map<string, number>();
  const push = (n: ProgramNode): number => {
    const key = JSON.stringify(n);
    const hit = seen.get(key);
    if (hit !== undefined) return hit;
    nodes.push(n);
    seen.set(key, nodes.length - 1);
    return nodes.length - 1;
  };
  const isConst = (e: CheckedExpr): boolean =>
    e.k === 'num' ||
    (e.k === 'sym' && e.kind === 'parameter') ||
    (e.k === 'unary' && isConst(e.a)) ||
    (e.k === 'binary' && isConst(e.a) && isConst(e.b)) ||
    (e.k === 'cond' && isConst(e.c) && isConst(e.a) && isConst(e.b)) ||
    (e.k === 'call' && (e.fn === 'min' || e.fn === 'max' || e.fn === 'clamp') && e.args.every(isConst));
  const bad = (rule: string, value: unknown, hint?: string): void => {
    L.issues.push(issue('E_EXPR_ARGUMENT', field, rule, value, hint));
  };
  const go = (e: CheckedExpr): number => {
    if (isConst(e)) return push({ op: 'num', value: foldConstant(e, L.params) });
    switch (e.k) {
      case 'num':
        return push({ op: 'num', value: e.value });
      case 'sym':
        if (e.kind === 'equity' || e.kind === 'fx')
          return push({ op: 'level', source: sourceOf(L.deal, e.name), at: 'now' });
        if (e.kind === 'state') return push({ op: 'state', name: e.name });
        if (e.name === 't') return push({ op: 'time' });
        if (e.name === 'dt') return push({ op: 'accrual' });
        if (e.name === 'index') return push({ op: 'index' });
        return push({ op: 'count' });
      case 'unary':
        return push({ op: 'unary', fn: e.fn, a: go(e.a) });
      case 'binary': {
        const a = go(e.a);
        const b = go(e.b);
        return push({ op: 'binary', fn: e.fn, a, b });
      }
      case 'cond': {
        const c = go(e.c);
        const a = go(e.a);
        const b = go(e.b);
        // `test ? 1 : 0` of a comparison or logical test is the test itself (its values are already 1 or 0)
        const cn = nodes[c]!;
        const isTest =
          (cn.op === 'binary' && ['lt', 'le', 'gt', 'ge', 'eq', 'ne', 'and', 'or'].includes(cn.fn)) ||
          (cn.op === 'unary' && cn.fn === 'not');
        const an = nodes[a]!;
        const bn = nodes[b]!;
        if (isTest && an.op === 'num' && an.value === 1 && bn.op === 'num' && bn.value === 0) return c;
        return push({ op: 'select', c, a, b });
      }
      case 'call':
        return call(e);
    }
  };
  /** The initial fixing when the deal gives one, else the path's level at the valuation date. */
  const startLevel = (id: string): number => {
    const fixed = L.deal.underlyings[id]!.initialLevel;
    return fixed !== undefined
      ? push({ op: 'num', value: fixed })
      : push({ op: 'level', source: sourceOf(L.deal, id), at: 'start' });
  };
  const call = (e: Extract<CheckedExpr, { k: 'call' }>): number => {
    const c = (i: number): number => foldConstant(e.args[i]!, L.params);
    switch (e.fn) {
      case 'min':
      case 'max':
        return push({ op: 'nary', fn: e.fn, args: e.args.map(go) });
      case 'clamp': {
        const [x, lo, hi] = e.args.map(go) as [number, number, number];
        const m = push({ op: 'nary', fn: 'max', args: [x, lo] });
        return push({ op: 'nary', fn: 'min', args: [m, hi] });
      }
      case 'start':
        return startLevel(e.names[0]!);
      case 'perf': {
        const now = push({ op: 'level', source: sourceOf(L.deal, e.names[0]!), at: 'now' });
        const s0 = startLevel(e.names[0]!);
        return push({ op: 'binary', fn: 'div', a: now, b: s0 });
      }
      case 'lowest':
      case 'highest':
      case 'average': {
        const fn = e.fn === 'lowest' ? 'min' : e.fn === 'highest' ? 'max' : 'mean';
        const source = sourceOf(L.deal, e.names[0]!);
        const sched = e.names[1];
        const obs: number[] | 'grid' = sched === undefined ? 'grid' : L.schedules[sched]!;
        if (obs !== 'grid') for (const t of obs) L.gridTimes.add(t);
        const key = JSON.stringify({ fn, source, sched: sched ?? null });
        let slot = L.runningKeys.indexOf(key);
        if (slot < 0) {
          L.running.push({ fn, source, times: obs });
          L.runningKeys.push(key);
          slot = L.running.length - 1;
        }
        return push({ op: 'running', slot });
      }
      case 'short_rate':
        return push({ op: 'shortRate', currency: e.names[0]! });
      case 'fixing': {
        if (e.args.length === 0) {
          // the period since the previous schedule date: every fixing date is a schedule date or 0
          return push({ op: 'fixing', currency: e.names[0]!, tau: null });
        }
        const tau = c(0);
        if (!(tau > 0 && tau <= 50)) bad('fixing(C, tau) needs 0 < tau <= 50 years', tau);
        // a period that began before the valuation date reads its rate from the deal's history (resolvePast)
        for (const t of times) if (t - tau >= -1e-9) L.gridTimes.add(Math.max(0, t - tau));
        return push({ op: 'fixing', currency: e.names[0]!, tau });
      }
      case 'term_rate': {
        const tau = c(0);
        if (!(tau > 0 && tau <= 50)) bad('term_rate(C, tau) needs 0 < tau <= 50 years', tau);
        return push({ op: 'termRate', currency: e.names[0]!, tau });
      }
      case 'swap_rate': {
        const years = c(0);
        const perYear = c(1);
        if (!(years > 0 && years <= 60)) bad('swap_rate(C, years, perYear) needs 0 < years <= 60', years);
        if (!(Number.isInteger(perYear) && perYear >= 1 && perYear <= 12))
          bad('swap_rate(C, years, perYear) needs perYear a whole number 1..12', perYear);
        else if (Math.abs(years * perYear - Math.round(years * perYear)) > 1e-9)
          bad(
            'swap_rate(C, years, perYear) needs years × perYear to be a whole number of payments',
            years * perYear,
          );
        return push({ op: 'swapRate', currency: e.names[0]!, years, perYear });
      }
      case 'bond': {
        const maturity = c(0);
        const late = times.find((t) => t > maturity + 1e-9);
        if (!Number.isFinite(maturity) || late !== undefined)
          bad('bond(C, T) needs T on or after every date of the event', { maturity, eventTime: late });
        return push({ op: 'bond', currency: e.names[0]!, maturity });
      }
    }
    return push({ op: 'num', value: NaN });
  };
  const root = go(tree);
  // The root is the last node; a shared or simplified root (e.g. a top-level `test ? 1 : 0`) gets a one-argument copy.
  if (root !== nodes.length - 1) nodes.push({ op: 'nary', fn: 'max', args: [root] });
  return { field, text, nodes };
}

/**
 * The names an expression of `deal` may use, for checking one expression on its own (type-as-you-check). Tolerates a
 * partial deal (missing sections are empty); clashes and reserved names are reported by {@link checkDeal}, not here.
 */
export function dealSymbols(deal: Partial<DealInput>): Record<string, SymbolKind> {
  const symbols = Object.create(null) as Record<string, SymbolKind>;
  const add = (name: string, kind: SymbolKind) => {
    if (!RESERVED_NAMES.has(name) && !hasOwn(symbols, name)) symbols[name] = kind;
  };
  for (const [id, u] of Object.entries(deal.underlyings ?? {})) add(id, u?.kind === 'fx' ? 'fx' : 'equity');
  for (const c of deal.rates ?? []) add(c, 'rateCurrency');
  for (const k of Object.keys(deal.parameters ?? {})) add(k, 'parameter');
  for (const k of Object.keys(deal.state ?? {})) add(k, 'state');
  for (const k of Object.keys(deal.schedules ?? {})) add(k, 'schedule');
  return symbols;
}

/** The context for checking the expression at `field` of `deal` with `checkExpression`. */
export function expressionContextOf(deal: Partial<DealInput>, field: string): ExpressionContext {
  return { field, symbols: { ...dealSymbols(deal) } };
}

/**
 * Checks a deal file (raw JSON value) completely and compiles it when it is valid. Never throws for bad input:
 * every problem comes back as an issue naming the field (and, for expressions, the character position).
 */
export function checkDeal(raw: unknown): DealCheck {
  const shape = dealShapeIssues(raw);
  if (shape.length > 0) return { issues: shape, expressionErrors: [] };
  const deal = raw as DealInput;
  const issues: FieldIssue[] = [];
  const exprErrors: ExpressionError[] = [];
  const guard = <T>(f: () => T): T | undefined => {
    try {
      return f();
    } catch (e) {
      if (e instanceof EngineError) issues.push(...e.issues);
      else throw e;
      return undefined;
    }
  };

  // Names: one namespace for underlyings, rate currencies, parameters, state and schedules.
  const symbols: Record<string, SymbolKind> = Object.create(null) as Record<string, SymbolKind>;
  const declare = (name: string, kind: SymbolKind, field: string): void => {
    if (!IDENT.test(name))
      issues.push(
        issue('E_BAD_NAME', field, 'must be a name: a letter, then letters, digits or _ (up to 40)', name),
      );
    else if (RESERVED_NAMES.has(name))
      issues.push(
        issue(
          'E_RESERVED_NAME',
          field,
          'must not be a reserved word of the language',
          name,
          'choose another name',
        ),
      );
    else if (hasOwn(symbols, name))
      issues.push(
        issue(
          'E_DUPLICATE_NAME',
          field,
          `must be unique across underlyings, rates, parameters, state and schedules (already a ${symbols[name]})`,
          name,
        ),
      );
    else symbols[name] = kind;
  };
  for (const [id, u] of Object.entries(deal.underlyings)) {
    declare(id, u.kind === 'equity' ? 'equity' : 'fx', `deal.underlyings.${id}`);
    if (u.kind === 'fx' && u.units === u.per)
      issues.push(issue('E_FX_SAME_CURRENCY', `deal.underlyings.${id}.per`, 'must differ from units', u.per));
  }
  const rates = deal.rates ?? [];
  rates.forEach((c, i) => declare(c, 'rateCurrency', `deal.rates[${i}]`));
  for (const k of Object.keys(deal.parameters ?? {})) declare(k, 'parameter', `deal.parameters.${k}`);
  for (const k of Object.keys(deal.state ?? {})) declare(k, 'state', `deal.state.${k}`);
  for (const k of Object.keys(deal.schedules)) declare(k, 'schedule', `deal.schedules.${k}`);

  const valuationDay =
    deal.valuationDate === undefined
      ? null
      : (guard(() => isoDayNumber('deal.valuationDate', deal.valuationDate!)) ?? null);
  const params = new Map<string, number>();
  for (const [k, v] of Object.entries(deal.parameters ?? {})) {
    const value =
      typeof v === 'number' ? v : guard(() => toYearFraction(`deal.parameters.${k}`, v, valuationDay));
    if (value !== undefined) {
      if (!Number.isFinite(value))
        issues.push(issue('E_NOT_FINITE', `deal.parameters.${k}`, 'must be a finite number or a date', v));
      params.set(k, value);
    }
  }
  const schedules: Record<string, number[]> = {};
  const starts: Record<string, number> = {};
  const calendar = guard(() => makeBusinessCalendar('deal.calendar', deal.calendar)) ?? WEEKDAYS;
  for (const [k, s] of Object.entries(deal.schedules)) {
    // dates before the valuation date belong to a deal under way: resolved from its history (resolvePast)
    const times = guard(() => expandSchedule(`deal.schedules.${k}`, s, valuationDay, true, calendar));
    if (times) schedules[k] = times;
    starts[k] =
      'start' in s
        ? (guard(() => toYearFraction(`deal.schedules.${k}.start`, s.start, valuationDay, true)) ?? 0)
        : 0;
  }
  if (issues.some((i) => i.severity === 'error')) return { issues, expressionErrors: [] };

  const L: Lowering = { deal, params, schedules, running: [], runningKeys: [], gridTimes: new Set(), issues };
  const program = (text: string, field: string, times: number[]): Program | null => {
    const ctx: ExpressionContext = { field, symbols };
    const r = checkExpression(text, ctx);
    if (!r.tree) {
      exprErrors.push(...r.errors);
      for (const e of r.errors)
        issues.push({ ...issue(e.code, field, e.message.slice(field.length + 2), text), message: e.message });
      return null;
    }
    return lower(L, r.tree, field, text, times);
  };
  const scheduleOf = (name: string, field: string): number[] | null => {
    if (!hasOwn(schedules, name)) {
      issues.push(
        issue(
          'E_UNKNOWN_SCHEDULE',
          field,
          'must name a schedule of deal.schedules',
          name,
          `known: ${Object.keys(schedules).join(', ')}`,
        ),
      );
      return null;
    }
    return schedules[name]!;
  };
  const payment = (
    p: PaymentInput | { amount: string; currency?: string; conversion?: Conversion },
    field: string,
    times: number[],
  ): CompiledPayment | null => {
    const ccy = p.currency ?? deal.currency;
    let conversion: Conversion | null = p.conversion ?? null;
    if (ccy === deal.currency) {
      if (conversion)
        issues.push(
          issue(
            'E_NEEDLESS_CONVERSION',
            `${field}.conversion`,
            `must be absent when paying in the deal currency ${deal.currency}`,
            conversion,
          ),
        );
      conversion = null;
    } else if (!conversion) {
      issues.push(
        issue(
          'E_MISSING_CONVERSION',
          `${field}.conversion`,
          `is required for a payment in ${ccy} (deal currency ${deal.currency})`,
          undefined,
          'add {"kind": "compo"} (at the path FX rate) or {"kind": "quanto", "rate": R} (fixed)',
        ),
      );
    }
    const amount = program(p.amount, `${field}.amount`, times);
    return amount ? { amount, currency: ccy, conversion } : null;
  };

  const stateNames = Object.keys(deal.state ?? {});
  const events: CompiledEvent[] = [];
  deal.events.forEach((ev, i) => {
    const f = `deal.events[${i}]`;
    const times = scheduleOf(ev.on, `${f}.on`);
    if (!times) return;
    for (const t of times) L.gridTimes.add(t);
    const when = ev.when === undefined ? null : program(ev.when, `${f}.when`, times);
    const pays = ev.pay === undefined ? [] : Array.isArray(ev.pay) ? ev.pay : [ev.pay];
    const pay: CompiledPayment[] = [];
    pays.forEach((p, j) => {
      const c = payment(p, Array.isArray(ev.pay) ? `${f}.pay[${j}]` : `${f}.pay`, times);
      if (c) pay.push(c);
    });
    const set: { name: string; value: Program }[] = [];
    for (const [name, text] of Object.entries(ev.set ?? {})) {
      if (!stateNames.includes(name)) {
        issues.push(
          issue(
            'E_UNKNOWN_STATE',
            `${f}.set.${name}`,
            'must name a state variable of deal.state',
            name,
            'declare it with an initial value in "state"',
          ),
        );
        continue;
      }
      const pr = program(text, `${f}.set.${name}`, times);
      if (pr) set.push({ name, value: pr });
    }
    if (pays.length === 0 && !ev.set && !ev.terminate)
      issues.push(
        issue('E_EMPTY_EVENT', f, 'must pay, set state or terminate', ev, 'add "pay", "set" or "terminate"'),
      );
    if (starts[ev.on]! > 0) L.gridTimes.add(starts[ev.on]!);
    events.push({
      label: ev.label ?? `event ${i + 1}`,
      schedule: ev.on,
      times,
      startTime: starts[ev.on]!,
      when,
      pay,
      set,
      terminate: ev.terminate === true,
    });
  });
  const exercise: CompiledExercise[] = [];
  (deal.exercise ?? []).forEach((x, i) => {
    const f = `deal.exercise[${i}]`;
    const times = scheduleOf(x.on, `${f}.on`);
    if (!times) return;
    for (const t of times) L.gridTimes.add(t);
    const amount = payment(x, f, times);
    if (amount)
      exercise.push({
        label: x.label ?? `exercise ${i + 1}`,
        schedule: x.on,
        times,
        startTime: starts[x.on]!,
        by: x.by,
        amount,
      });
  });

  if (issues.some((i) => i.severity === 'error')) return { issues, expressionErrors: exprErrors };
  const past = resolvePast({
    deal,
    valuationDay,
    events,
    exercise,
    rolled: Object.fromEntries(Object.entries(deal.schedules).map(([k, s]) => [k, 'start' in s])),
    running: L.running,
    runningLabels: L.runningKeys.map((key) => {
      const k = JSON.parse(key) as { fn: string; source: LevelSource; sched: string | null };
      const fn = k.fn === 'min' ? 'lowest' : k.fn === 'max' ? 'highest' : 'average';
      const id =
        k.source.kind === 'equity'
          ? k.source.name
          : (Object.entries(deal.underlyings).find(
              ([, u]) =>
                u.kind === 'fx' &&
                k.source.kind === 'fx' &&
                u.units === k.source.units &&
                u.per === k.source.per,
            )?.[0] ?? '?');
      return `${fn}(${id}${k.sched === null ? '' : `, ${k.sched}`})`;
    }),
    schedules,
    state: stateNames.map((name) => ({ name, initial: deal.state![name]! })),
  });
  issues.push(...past.issues);
  const needs = past.underWay ? { historyNeeds: past.needs } : {};
  if (issues.some((i) => i.severity === 'error')) return { issues, expressionErrors: exprErrors, ...needs };
  const grid = [...L.gridTimes].filter((t) => t > 0).sort((a, b) => a - b);
  const dedup: number[] = [];
  for (const t of grid) if (dedup.length === 0 || t - dedup[dedup.length - 1]! > 1e-10) dedup.push(t);
  const compiled: CompiledDeal = {
    format: COMPILED_FORMAT,
    name: deal.name,
    currency: deal.currency,
    notional: deal.notional,
    equities: Object.entries(deal.underlyings).flatMap(([id, u]) =>
      u.kind === 'equity' ? [{ id, marketName: u.marketName ?? id, currency: u.currency }] : [],
    ),
    fx: Object.entries(deal.underlyings).flatMap(([id, u]) =>
      u.kind === 'fx' ? [{ id, units: u.units, per: u.per }] : [],
    ),
    rates: [...rates],
    state: past.state,
    schedules: past.schedules,
    running: past.running.map((r) => ({
      fn: r.fn,
      source: r.source,
      times: r.times,
      ...(r.seed ? { seed: r.seed } : {}),
    })),
    events: past.events,
    exercise: past.exercise,
    fundingSpread: deal.fundingSpread ?? 0,
    gridTimes: dedup,
    lastTime: dedup.length > 0 ? dedup[dedup.length - 1]! : 0,
  };
  if (past.history) compiled.history = past.history;
  return { issues, expressionErrors: exprErrors, compiled, ...needs };
}

/** Compiles a deal file; throws an EngineError listing every issue when it is not valid. */
export function compileDeal(raw: unknown): CompiledDeal {
  const r = checkDeal(raw);
  if (!r.compiled) {
    const errors = r.issues.filter((i) => i.severity === 'error');
    const more = errors.length > 1 ? ` (and ${errors.length - 1} more)` : '';
    throw new EngineError(
      errors[0]?.code ?? 'E_INVALID_DEAL',
      (errors[0]?.message ?? 'invalid deal') + more,
      r.issues,
    );
  }
  return r.compiled;
}
