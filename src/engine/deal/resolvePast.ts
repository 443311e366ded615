/**
 * The past of a deal under way, resolved once at compile time. Every event date strictly before the valuation date
 * is run on the deal's history (levels and fixed rates given in the file), one number at a time, with the
 * evaluator's rules: on each date the running minima, maxima and averages take that date's level, then the events of
 * that date run in file order (fire where `when` is non-zero; pay; set from the state before the event; terminate),
 * and exercise rights of past dates are ignored. What comes out is a forward-looking deal: remaining dates only
 * (times ≥ 0), the state after the past as its initial state, running values seeded with the past observations,
 * `index`/`count`/`dt` continuing the full schedule, and rates already fixed for remaining periods that began
 * earlier. Past payments are listed (they are paid, so not part of the value).
 *
 * A date on the valuation date itself is today's: it is not part of the past and reads the market as before.
 */
import { issue, type FieldIssue } from '../errors.ts';
import { formatIsoDate, parseIsoDate } from '../market/dates.ts';
import { scalarBinary, scalarUnary } from './scalarOps.ts';
import type {
  CompiledEvent,
  CompiledExercise,
  CompiledHistory,
  DealInput,
  HistoryNeed,
  LevelSource,
  PastPayment,
  Program,
  ProgramNode,
  RunningSpec,
} from './types.ts';

/** What the compiler hands over: the deal's dates over its whole life (past dates as negative times). */
export interface PastInput {
  deal: DealInput;
  /** Day number of the valuation date, or null when the deal has none. */
  valuationDay: number | null;
  events: CompiledEvent[];
  exercise: CompiledExercise[];
  /** Schedule name → true when it is rolled from a start date (its first period starts there). */
  rolled: Record<string, boolean>;
  running: RunningSpec[];
  /** One label per running slot for messages, e.g. `lowest(ALDR, obs)`. */
  runningLabels: string[];
  schedules: Record<string, number[]>;
  state: { name: string; initial: number }[];
}

/** The remaining deal, or the issues that stop it; `needs` lists every past level and rate the deal reads. */
export interface PastResolution {
  issues: FieldIssue[];
  /** True when some date or period of the deal lies before the valuation date. */
  underWay: boolean;
  needs: HistoryNeed[];
  events: CompiledEvent[];
  exercise: CompiledExercise[];
  running: RunningSpec[];
  schedules: Record<string, number[]>;
  state: { name: string; initial: number }[];
  history?: CompiledHistory;
}

const PAST_EPS = 1e-9;
const isPast = (t: number): boolean => t < -PAST_EPS;

function programsOf(e: CompiledEvent): Program[] {
  return [...(e.when ? [e.when] : []), ...e.pay.map((p) => p.amount), ...e.set.map((s) => s.value)];
}

/** Rolls the past of a deal forward (see the module comment). Never throws for bad input: issues come back. */
export function resolvePast(input: PastInput): PastResolution {
  const { deal, valuationDay: vd } = input;
  const issues: FieldIssue[] = [];
  const unchanged: PastResolution = {
    issues,
    underWay: false,
    needs: [],
    events: input.events,
    exercise: input.exercise,
    running: input.running,
    schedules: input.schedules,
    state: input.state,
  };

  const idOf = (src: LevelSource): string =>
    src.kind === 'equity'
      ? src.name
      : (Object.entries(deal.underlyings).find(
          ([, u]) => u.kind === 'fx' && u.units === src.units && u.per === src.per,
        )?.[0] ?? `${src.per}/${src.units}`);

  // Remaining fixings whose period began before the valuation date, per fixing node.
  const accrualStart = (x: CompiledEvent | CompiledExercise, j: number): number | null =>
    j > 0 ? x.times[j - 1]! : input.rolled[x.schedule] ? (x.startTime ?? 0) : x.times[0]! < 0 ? null : 0;
  const earlyFixing = (e: CompiledEvent): boolean =>
    programsOf(e).some((p) =>
      p.nodes.some(
        (n) =>
          n.op === 'fixing' &&
          e.times.some((t, j) => {
            const fd = n.tau === null ? accrualStart(e, j) : t - n.tau;
            return fd !== null && isPast(fd);
          }),
      ),
    );
  const underWay =
    input.events.some((e) => e.times.some(isPast) || isPast(e.startTime ?? 0) || earlyFixing(e)) ||
    input.exercise.some((x) => x.times.some(isPast) || isPast(x.startTime ?? 0)) ||
    input.running.some((r) => r.times !== 'grid' && r.times.some(isPast));
  const history = deal.history;
  const given = Object.keys(history?.fixings ?? {}).length + Object.keys(history?.rates ?? {}).length > 0;
  if (!underWay && !given) return unchanged;
  if (vd === null) {
    issues.push(
      issue(
        underWay ? 'E_PAST_NEEDS_DATE' : 'E_HISTORY_NEEDS_DATE',
        'deal.valuationDate',
        underWay
          ? 'is needed: a rate of the deal is fixed before the valuation date, and past fixings are given by date'
          : 'is needed to read deal.history (past fixings are given by date)',
        undefined,
        'add "valuationDate": "YYYY-MM-DD"',
      ),
    );
    return { ...unchanged, issues, underWay };
  }
  const iso = (day: number): string => formatIsoDate(day);
  const dayOf = (t: number): number => vd + Math.round(t * 365);
  const fixField = (id: string, day: number): string => `deal.history.fixings.${id}["${iso(day)}"]`;
  const rateField = (c: string, day: number): string => `deal.history.rates.${c}["${iso(day)}"]`;

  // The history as given: checked names and past dates only.
  const fixings = new Map<string, Map<number, number>>();
  const rates = new Map<string, Map<number, number>>();
  const readHistory = (
    section: 'fixings' | 'rates',
    known: (name: string) => boolean,
    knownList: string,
    into: Map<string, Map<number, number>>,
  ): void => {
    for (const [name, byDate] of Object.entries(history?.[section] ?? {})) {
      const base = `deal.history.${section}.${name}`;
      if (!known(name)) {
        issues.push(
          issue(
            section === 'fixings' ? 'E_HISTORY_UNKNOWN_UNDERLYING' : 'E_HISTORY_UNKNOWN_CURRENCY',
            base,
            section === 'fixings'
              ? 'must name an underlying of deal.underlyings'
              : 'must name a currency of deal.rates',
            name,
            `known: ${knownList || 'none'}`,
          ),
        );
        continue;
      }
      const m = new Map<number, number>();
      for (const [date, value] of Object.entries(byDate)) {
        const field = `${base}["${date}"]`;
        let day: number;
        try {
          day = parseIsoDate(date, field).dayNumber;
        } catch {
          issues.push(issue('E_HISTORY_BAD_DATE', field, 'must be keyed by an ISO date YYYY-MM-DD', date));
          continue;
        }
        if (day >= vd) {
          issues.push({
            ...issue(
              'E_HISTORY_NOT_PAST',
              field,
              `is on or after the valuation date ${iso(vd)}`,
              value,
              'only what happened before the valuation date belongs in the history (the models simulate the rest): remove it',
            ),
          });
          continue;
        }
        m.set(day, value);
      }
      into.set(name, m);
    }
  };
  readHistory(
    'fixings',
    (n) => Object.prototype.hasOwnProperty.call(deal.underlyings, n),
    Object.keys(deal.underlyings).join(', '),
    fixings,
  );
  readHistory('rates', (c) => (deal.rates ?? []).includes(c), (deal.rates ?? []).join(', '), rates);

  // What the past (and the remaining periods that began in it) reads, found from the programs alone.
  const needs = new Map<string, HistoryNeed>();
  const need = (kind: 'fixing' | 'rate', name: string, day: number, neededBy: string): void => {
    const key = `${kind}|${name}|${day}`;
    if (needs.has(key)) return;
    const has = (kind === 'fixing' ? fixings : rates).get(name)?.has(day) === true;
    needs.set(key, {
      kind,
      name,
      date: iso(day),
      field: kind === 'fixing' ? fixField(name, day) : rateField(name, day),
      neededBy,
      given: has,
    });
  };
  const known = new Map<ProgramNode, { time: number; rate: number }[]>();
  const rateNeedsFor = new Map<ProgramNode, { time: number; day: number }[]>();
  const startReads = new Set<string>();
  const visit = (x: CompiledEvent | CompiledExercise, programs: Program[], isEvent: boolean): void => {
    for (const p of programs)
      for (const n of p.nodes) if (n.op === 'level' && n.at === 'start') startReads.add(idOf(n.source));
    x.times.forEach((t, j) => {
      const past = isPast(t);
      const day = dayOf(t);
      const on = `${isEvent ? 'event' : 'exercise'} "${x.label}" on ${iso(day)}`;
      if (past && !isEvent) return; // past exercise rights are ignored
      for (const p of programs)
        for (const n of p.nodes) {
          if (past && n.op === 'level' && n.at === 'now') need('fixing', idOf(n.source), day, on);
          else if (past && n.op === 'accrual' && accrualStart(x, j) === null)
            issues.push(
              issue(
                'E_PAST_NO_PERIOD_START',
                p.field,
                `reads dt on ${iso(day)}, the first date of a dates schedule before the valuation date, whose period has no start`,
                p.text,
                `give deal.schedules.${x.schedule} as start, end and every (the start begins the first period), or do not read dt on its first date`,
              ),
            );
          else if (n.op === 'fixing') {
            const fd = n.tau === null ? accrualStart(x, j) : t - n.tau;
            const what = `fixing(${n.currency}${n.tau === null ? '' : `, ${n.tau}`}) in ${p.field} on ${iso(day)}`;
            if (fd === null)
              issues.push(
                issue(
                  'E_PAST_NO_PERIOD_START',
                  p.field,
                  `reads fixing(${n.currency}) on ${iso(day)}, the first date of a dates schedule before the valuation date, whose period has no start`,
                  p.text,
                  `give deal.schedules.${x.schedule} as start, end and every (the start begins the first period)`,
                ),
              );
            else if (isPast(fd)) {
              need('rate', n.currency, dayOf(fd), what);
              if (!past) {
                const list = rateNeedsFor.get(n) ?? [];
                list.push({ time: t, day: dayOf(fd) });
                rateNeedsFor.set(n, list);
              }
            }
          } else if (past && n.op === 'termRate')
            need('rate', n.currency, day, `term_rate(${n.currency}, ${n.tau}) in ${p.field} on ${iso(day)}`);
          else if (past && (n.op === 'shortRate' || n.op === 'swapRate' || n.op === 'bond'))
            issues.push(
              issue(
                'E_PAST_RATE_NOT_RECORDED',
                p.field,
                `reads ${n.op === 'shortRate' ? 'short_rate' : n.op === 'swapRate' ? 'swap_rate' : 'bond'}(${n.currency}) on ${iso(day)}, a date before the valuation date; the history records levels and fixed simple rates only`,
                p.text,
                'split the schedule at the valuation date and give the past amounts as parameters',
              ),
            );
        }
    });
  };
  input.events.forEach((e) => visit(e, programsOf(e), true));
  input.exercise.forEach((x) => visit(x, [x.amount.amount], false));
  input.running.forEach((r, i) => {
    if (r.times === 'grid') {
      if (underWay)
        issues.push(
          issue(
            'E_PAST_RUNNING_GRID',
            'deal',
            `${input.runningLabels[i]} without a schedule observes every simulation step from the valuation date only; levels before it are not included`,
            input.runningLabels[i],
            'name a schedule as the second argument to include its past dates',
            'warning',
          ),
        );
      return;
    }
    for (const t of r.times)
      if (isPast(t))
        need('fixing', idOf(r.source), dayOf(t), `${input.runningLabels[i]} on ${iso(dayOf(t))}`);
  });
  if (underWay)
    for (const id of startReads)
      if (deal.underlyings[id]?.initialLevel === undefined)
        issues.push(
          issue(
            'E_PAST_NEEDS_INITIAL_LEVEL',
            `deal.underlyings.${id}.initialLevel`,
            `must be given for a deal under way: start(${id}) and perf(${id}) read the level at issue, not today's`,
            undefined,
            'give the level fixed on the issue (strike) date',
          ),
        );
  const needList = [...needs.values()].sort(
    (a, b) => a.date.localeCompare(b.date) || a.kind.localeCompare(b.kind) || a.name.localeCompare(b.name),
  );
  for (const n of needList)
    if (!n.given) {
      const rule = `needed by ${n.neededBy} (a past date)`;
      const fix =
        n.kind === 'fixing'
          ? 'give the level observed that day'
          : 'give the simple rate per year fixed that day (0.031 for 3.1 %)';
      issues.push({
        ...issue(n.kind === 'fixing' ? 'E_MISSING_FIXING' : 'E_MISSING_RATE', n.field, rule, undefined),
        message: `${n.field}: ${rule}; ${fix}`,
      });
    }
  if (!underWay || issues.some((i) => i.severity === 'error'))
    return { ...unchanged, issues, underWay, needs: needList };

  // Rates already fixed for remaining periods that began before the valuation date.
  for (const [node, list] of rateNeedsFor) {
    const ccy = (node as { currency: string }).currency;
    known.set(
      node,
      list.map(({ time, day }) => ({ time, rate: rates.get(ccy)!.get(day)! })),
    );
  }

  // Run the past, date by date.
  const level = (src: LevelSource, day: number): number => fixings.get(idOf(src))!.get(day)!;
  const rate = (ccy: string, day: number): number => rates.get(ccy)!.get(day)!;
  const state = new Map(input.state.map((s) => [s.name, s.initial]));
  const runVal = input.running.map(() => 0);
  const runCount = input.running.map(() => 0);
  const evalScalar = (p: Program, x: CompiledEvent, j: number): number => {
    const t = x.times[j]!;
    const day = dayOf(t);
    const v: number[] = [];
    for (const n of p.nodes) {
      let r: number;
      switch (n.op) {
        case 'num':
          r = n.value;
          break;
        case 'level':
          r = n.at === 'now' ? level(n.source, day) : deal.underlyings[idOf(n.source)]!.initialLevel!;
          break;
        case 'state':
          r = state.get(n.name)!;
          break;
        case 'time':
          r = t;
          break;
        case 'accrual':
          r = t - accrualStart(x, j)!;
          break;
        case 'index':
          r = j + 1;
          break;
        case 'count':
          r = x.times.length;
          break;
        case 'running':
          r = runVal[n.slot]!;
          break;
        case 'fixing': {
          const fd = n.tau === null ? accrualStart(x, j)! : t - n.tau;
          r = rate(n.currency, dayOf(fd));
          break;
        }
        case 'termRate':
          r = rate(n.currency, day);
          break;
        case 'unary':
          r = scalarUnary(n.fn, v[n.a]!);
          break;
        case 'binary':
          r = scalarBinary(n.fn, v[n.a]!, v[n.b]!);
          break;
        case 'nary': {
          // the evaluator's comparisons (not Math.min/max), so NaN and −0 behave alike
          r = v[n.args[0]!]!;
          for (let i = 1; i < n.args.length; i++) {
            const y = v[n.args[i]!]!;
            r = n.fn === 'min' ? (y < r ? y : r) : y > r ? y : r;
          }
          break;
        }
        case 'select':
          r = v[n.c]! !== 0 ? v[n.a]! : v[n.b]!;
          break;
        default:
          r = NaN; // short rates, swap rates and bonds on past dates were refused above
      }
      v.push(r);
    }
    return v[v.length - 1]!;
  };

  type Occ = { day: number; kind: 0 | 1 | 2; idx: number; j: number };
  const occ: Occ[] = [];
  input.running.forEach((r, idx) => {
    if (r.times !== 'grid')
      r.times.forEach((t, j) => {
        if (isPast(t)) occ.push({ day: dayOf(t), kind: 0, idx, j });
      });
  });
  input.events.forEach((e, idx) =>
    e.times.forEach((t, j) => {
      if (isPast(t)) occ.push({ day: dayOf(t), kind: 1, idx, j });
    }),
  );
  input.exercise.forEach((x, idx) =>
    x.times.forEach((t, j) => {
      if (isPast(t)) occ.push({ day: dayOf(t), kind: 2, idx, j });
    }),
  );
  occ.sort((a, b) => a.day - b.day || a.kind - b.kind || a.idx - b.idx);
  const summary: CompiledHistory = {
    valuationDate: iso(vd),
    events: [],
    payments: [],
    ignoredExercise: [],
    state: {},
  };
  for (const o of occ) {
    if (o.kind === 0) {
      const spec = input.running[o.idx]!;
      const lv = level(spec.source, o.day);
      const c = runCount[o.idx]!;
      const acc = runVal[o.idx]!;
      runVal[o.idx] =
        c === 0
          ? lv
          : spec.fn === 'min'
            ? lv < acc
              ? lv
              : acc
            : spec.fn === 'max'
              ? lv > acc
                ? lv
                : acc
              : acc + (lv - acc) / (c + 1);
      runCount[o.idx] = c + 1;
      continue;
    }
    if (o.kind === 2) {
      summary.ignoredExercise.push({ label: input.exercise[o.idx]!.label, date: iso(o.day) });
      continue;
    }
    const e = input.events[o.idx]!;
    const fired = e.when === null || evalScalar(e.when, e, o.j) !== 0;
    summary.events.push({ event: e.label, date: iso(o.day), fired });
    if (!fired) continue;
    for (const pay of e.pay) {
      const a = evalScalar(pay.amount, e, o.j);
      if (!Number.isFinite(a)) {
        issues.push(
          issue(
            'E_PAYOFF_NOT_FINITE',
            pay.amount.field,
            `must give a finite amount on ${iso(o.day)} (a past date, from the history)`,
            a,
            'check the past fixings, or guard divisions and logarithms',
          ),
        );
        return { ...unchanged, issues, underWay, needs: needList };
      }
      const payment: PastPayment = {
        event: e.label,
        date: iso(o.day),
        currency: pay.currency,
        amount: a,
        cash: deal.notional * a,
      };
      summary.payments.push(payment);
    }
    const next = e.set.map((s) => evalScalar(s.value, e, o.j));
    e.set.forEach((s, i) => state.set(s.name, next[i]!));
    if (e.terminate) {
      const idx = input.events.indexOf(e);
      const field = `deal.events[${idx}]`;
      const rule = `("${e.label}") fired on ${iso(o.day)}, before the valuation date ${iso(vd)}, and ended the deal`;
      issues.push({
        ...issue('E_DEAL_ENDED', field, rule, iso(o.day)),
        message: `${field} ${rule}: the deal has ended and there is nothing left to price (to price it as of an earlier day, set deal.valuationDate on or before ${iso(o.day)})`,
      });
      return { ...unchanged, issues, underWay, needs: needList };
    }
  }
  if (input.events.every((e) => !e.times.some((t) => !isPast(t)))) {
    const last = Math.max(...input.events.flatMap((e) => e.times));
    const rule = `is after every event date of the deal (the last was ${iso(dayOf(last))})`;
    issues.push({
      ...issue('E_DEAL_ENDED', 'deal.valuationDate', rule, deal.valuationDate),
      message: `deal.valuationDate ${rule}: the deal has ended and there is nothing left to price`,
    });
    return { ...unchanged, issues, underWay, needs: needList };
  }
  for (const [name, value] of state) summary.state[name] = value;

  // The remaining deal.
  const remaining = <X extends CompiledEvent | CompiledExercise>(x: X): X => {
    const pastDates = x.times.filter(isPast).length;
    const times = x.times.slice(pastDates);
    const start = x.startTime ?? 0;
    const out: X = { ...x, times };
    if (pastDates > 0 || isPast(start)) {
      if (start < 0) out.startTime = 0;
      if (pastDates > 0) out.pastDates = pastDates;
      if (times.length > 0) out.firstAccrual = times[0]! - (pastDates > 0 ? x.times[pastDates - 1]! : start);
    }
    return out;
  };
  for (const [node, list] of known) (node as { known?: { time: number; rate: number }[] }).known = list;
  const schedules: Record<string, number[]> = {};
  for (const [k, ts] of Object.entries(input.schedules)) schedules[k] = ts.filter((t) => !isPast(t));
  return {
    issues,
    underWay: true,
    needs: needList,
    events: input.events.map(remaining),
    exercise: input.exercise.map(remaining),
    running: input.running.map((r, i) => {
      if (r.times === 'grid') return r;
      const out: RunningSpec = { fn: r.fn, source: r.source, times: r.times.filter((t) => !isPast(t)) };
      if (runCount[i]! > 0) out.seed = { value: runVal[i]!, count: runCount[i]! };
      return out;
    }),
    schedules,
    state: input.state.map((s) => ({ name: s.name, initial: state.get(s.name)! })),
    history: summary,
  };
}
