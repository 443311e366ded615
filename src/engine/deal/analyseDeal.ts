/**
 * Reads a compiled deal and states, for the study's rules, what it depends on and how: rates (linear at their
 * natural date, non-linear, or observed at one time and paid at another), FX, compo and quanto payments, path
 * dependence, early termination and exercise rights, each with a one-line reason.
 *
 * Replication facts used (each for a payment at t, under the t-forward measure):
 *  - fixing(C, τ) paid at t: E[D(t) (1/P(t−τ,t) − 1)/τ] = (P(0,t−τ) − P(0,t))/τ, fixed by the curve
 *    (Brigo & Mercurio 2006, Sec. 1.5, forward-rate agreement);
 *  - bond(C, T) paid at t: E[D(t) P(t,T)] = P(0,T); short_rate(C) paid at t: E[D(t) r(t)] = −∂P(0,t)/∂t;
 *  - term_rate and swap_rate paid at their fixing date carry a convexity that depends on rate volatility
 *    (Brigo & Mercurio 2006, Sec. 13.8, in-arrears and CMS adjustments): timing mismatch.
 * Anything multiplied by another random quantity, capped, floored, compared or used in a condition is non-linear.
 */
import {
  ANALYSIS_FORMAT,
  type CompiledDeal,
  type DealAnalysis,
  type Finding,
  type ObservableUse,
  type Program,
  type ProgramNode,
  type RateDependence,
} from './types.ts';

const RATE_OPS = new Set(['shortRate', 'fixing', 'termRate', 'swapRate', 'bond']);
const MISMATCH_OPS = new Set(['termRate', 'swapRate']);

/** Per-node facts: 0 no dependence on currency C's rates, 1 affine with deterministic coefficients, 2 non-linear. */
interface NodeFacts {
  rate: 0 | 1 | 2;
  /** Depends on anything random on the path (levels, rates, state, running values). */
  random: boolean;
}

function nodeFacts(p: Program, ccy: string, rateStates: Set<string>, randomStates: Set<string>): NodeFacts[] {
  const f: NodeFacts[] = [];
  const g = (i: number): NodeFacts => f[i]!;
  for (const n of p.nodes) f.push(factsOf(n, ccy, g, rateStates, randomStates));
  return f;
}

function factsOf(
  n: ProgramNode,
  ccy: string,
  g: (i: number) => NodeFacts,
  rateStates: Set<string>,
  randomStates: Set<string>,
): NodeFacts {
  switch (n.op) {
    case 'num':
    case 'time':
    case 'accrual':
    case 'index':
    case 'count':
      return { rate: 0, random: false };
    case 'level':
      return { rate: 0, random: n.at === 'now' };
    case 'running':
      return { rate: 0, random: true };
    case 'state':
      return { rate: rateStates.has(n.name) ? 2 : 0, random: randomStates.has(n.name) };
    case 'shortRate':
    case 'fixing':
    case 'termRate':
    case 'swapRate':
    case 'bond':
      return { rate: n.currency === ccy ? 1 : 0, random: true };
    case 'unary': {
      const a = g(n.a);
      return { rate: n.fn === 'neg' ? a.rate : a.rate > 0 ? 2 : 0, random: a.random };
    }
    case 'binary': {
      const a = g(n.a);
      const b = g(n.b);
      const random = a.random || b.random;
      let rate: 0 | 1 | 2;
      switch (n.fn) {
        case 'add':
        case 'sub':
          rate = Math.max(a.rate, b.rate) as 0 | 1 | 2;
          break;
        case 'mul':
          rate =
            a.rate === 0 && b.rate === 0
              ? 0
              : (a.rate > 0 && b.random) || (b.rate > 0 && a.random)
                ? 2
                : (Math.max(a.rate, b.rate) as 1 | 2);
          break;
        case 'div':
          rate = b.rate > 0 ? 2 : a.rate > 0 && b.random ? 2 : a.rate;
          break;
        default:
          rate = a.rate > 0 || b.rate > 0 ? 2 : 0;
      }
      return { rate, random };
    }
    case 'nary': {
      const args = n.args.map(g);
      return { rate: args.some((x) => x.rate > 0) ? 2 : 0, random: args.some((x) => x.random) };
    }
    case 'select': {
      const c = g(n.c);
      const a = g(n.a);
      const b = g(n.b);
      const random = c.random || a.random || b.random;
      if (c.rate > 0) return { rate: 2, random };
      const r = Math.max(a.rate, b.rate) as 0 | 1 | 2;
      return { rate: r === 1 && c.random ? 2 : r, random };
    }
  }
}

const root = (p: Program, facts: NodeFacts[]): NodeFacts => facts[p.nodes.length - 1]!;

function finding(present: boolean, reason: string): Finding {
  return { present, reason };
}

/**
 * The remaining life of a deal under way, as the rules should see it: events and exercise rights with no date left
 * are dropped, and rates already fixed on every remaining date (`known` fixings) and running values with no
 * observation left are constants. A deal without a past is returned as it is.
 */
function remainingLife(deal: CompiledDeal): CompiledDeal {
  if (!deal.history) return deal;
  const settled = (n: ProgramNode, times: number[]): boolean => {
    if (n.op === 'fixing')
      return n.known !== undefined && times.every((t) => n.known!.some((k) => Math.abs(k.time - t) <= 1e-9));
    if (n.op === 'running') {
      const obs = deal.running[n.slot]!.times;
      return obs !== 'grid' && obs.length === 0;
    }
    return false;
  };
  const fixed = (p: Program, times: number[]): Program => ({
    ...p,
    nodes: p.nodes.map((n): ProgramNode => (settled(n, times) ? { op: 'num', value: 0 } : n)),
  });
  return {
    ...deal,
    events: deal.events
      .filter((e) => e.times.length > 0)
      .map((e) => ({
        ...e,
        when: e.when ? fixed(e.when, e.times) : null,
        pay: e.pay.map((p) => ({ ...p, amount: fixed(p.amount, e.times) })),
        set: e.set.map((x) => ({ ...x, value: fixed(x.value, e.times) })),
      })),
    exercise: deal.exercise
      .filter((x) => x.times.length > 0)
      .map((x) => ({ ...x, amount: { ...x.amount, amount: fixed(x.amount.amount, x.times) } })),
  };
}

/**
 * States what the rules need to know about a compiled deal (see the module comment for the replication facts). For a
 * deal under way only its remaining life counts: what was fixed or paid before the valuation date is no risk.
 */
export function analyseDeal(compiled: CompiledDeal): DealAnalysis {
  const deal = remainingLife(compiled);
  const programs: { p: Program; role: 'when' | 'pay' | 'set' | 'exercise'; ev: number; state?: string }[] =
    [];
  deal.events.forEach((e, i) => {
    if (e.when) programs.push({ p: e.when, role: 'when', ev: i });
    for (const pay of e.pay) programs.push({ p: pay.amount, role: 'pay', ev: i });
    for (const s of e.set) programs.push({ p: s.value, role: 'set', ev: i, state: s.name });
  });
  deal.exercise.forEach((x, i) => programs.push({ p: x.amount.amount, role: 'exercise', ev: i }));

  // Observables.
  const uses = new Map<string, ObservableUse>();
  const use = (kind: ObservableUse['kind'], name: string, field: string): void => {
    const key = `${kind}|${name}`;
    const u = uses.get(key) ?? { kind, name, fields: [] };
    if (!u.fields.includes(field)) u.fields.push(field);
    uses.set(key, u);
  };
  const usedEquities = new Set<string>();
  const usedFx = new Set<string>();
  const fxId = (units: string, per: string): string =>
    deal.fx.find((f) => f.units === units && f.per === per)?.id ?? `${per}/${units}`;
  for (const { p } of programs)
    for (const n of p.nodes) {
      if (n.op === 'level') {
        if (n.source.kind === 'equity') {
          usedEquities.add(n.source.name);
          use('equity', n.source.name, p.field);
        } else {
          const id = fxId(n.source.units, n.source.per);
          usedFx.add(id);
          use('fx', id, p.field);
        }
      } else if (n.op === 'running') {
        const s = deal.running[n.slot]!.source;
        const id = s.kind === 'equity' ? s.name : fxId(s.units, s.per);
        if (s.kind === 'equity') usedEquities.add(id);
        else usedFx.add(id);
        use('running', id, p.field);
      } else if (RATE_OPS.has(n.op))
        use(n.op as ObservableUse['kind'], (n as { currency: string }).currency, p.field);
      else if (n.op === 'state') use('state', n.name, p.field);
      else if (n.op === 'time' || n.op === 'accrual' || n.op === 'index' || n.op === 'count')
        use('time', n.op, p.field);
    }

  // State variables that carry randomness or rate dependence (fixed point over the updates).
  const randomStates = new Set<string>();
  const rateStatesBy = new Map<string, Set<string>>();
  const rateCcys = [
    ...new Set(
      programs.flatMap(({ p }) =>
        p.nodes.filter((n) => RATE_OPS.has(n.op)).map((n) => (n as { currency: string }).currency),
      ),
    ),
  ].sort();
  for (const c of rateCcys) rateStatesBy.set(c, new Set());
  for (let iter = 0; iter < deal.state.length + 1; iter++) {
    for (const { p, role, state, ev } of programs) {
      if (role !== 'set' || !state) continue;
      const conditional = deal.events[ev]!.when;
      const f = nodeFacts(p, '', new Set(), randomStates);
      const condRandom = conditional
        ? root(conditional, nodeFacts(conditional, '', new Set(), randomStates)).random
        : false;
      if (root(p, f).random || condRandom) randomStates.add(state);
      for (const c of rateCcys) {
        const rs = rateStatesBy.get(c)!;
        const fr = root(p, nodeFacts(p, c, rs, randomStates)).rate;
        const cr = conditional ? root(conditional, nodeFacts(conditional, c, rs, randomStates)).rate : 0;
        if (fr > 0 || cr > 0) rs.add(state);
      }
    }
  }
  const terminating = deal.events.filter((e) => e.terminate);

  // Rates, per currency.
  const rates: RateDependence[] = rateCcys.map((c) => {
    const rs = rateStatesBy.get(c)!;
    const nonLinear: string[] = [];
    const mismatch: string[] = [];
    for (const { p, role, ev } of programs) {
      const f = nodeFacts(p, c, rs, randomStates);
      const r = root(p, f);
      const ops = p.nodes
        .filter((n) => RATE_OPS.has(n.op) && (n as { currency: string }).currency === c)
        .map((n) => n.op);
      const readsRateState = p.nodes.some((n) => n.op === 'state' && rs.has(n.name));
      if (r.rate === 0 && !readsRateState) continue;
      if (role === 'when') nonLinear.push(`${p.field} is a condition on a ${c} rate (a digital)`);
      else if (role === 'set' && r.rate === 2)
        nonLinear.push(
          `${p.field} stores a non-linear function of a ${c} rate (condition, cap or floor) in state`,
        );
      else if (role === 'set') mismatch.push(`${p.field} stores a ${c} rate in state, paid at a later date`);
      else if (role === 'exercise') nonLinear.push(`${p.field}: exercise cash depends on a ${c} rate`);
      else if (readsRateState) mismatch.push(`${p.field} pays a ${c} rate observed on earlier dates`);
      else if (r.rate === 2)
        nonLinear.push(`${p.field} is non-linear in a ${c} rate (cap, floor, product or condition)`);
      else if (ops.some((o) => MISMATCH_OPS.has(o)))
        mismatch.push(`${p.field} pays a ${c} term or swap rate at its fixing date (convexity)`);
      else {
        const e = deal.events[ev]!;
        const condRandom = e.when ? root(e.when, nodeFacts(e.when, c, rs, randomStates)).random : false;
        const killable = terminating.some((te) => te.times.some((t) => t <= e.times[e.times.length - 1]!));
        if (condRandom)
          nonLinear.push(`${p.field} pays a ${c} rate only when ${e.when!.field} holds (a hybrid digital)`);
        else if (killable)
          nonLinear.push(`${p.field} pays a ${c} rate only while the deal is alive (early termination)`);
      }
    }
    const linear = nonLinear.length === 0 && mismatch.length === 0;
    return {
      currency: c,
      linearAtNaturalDate: linear,
      nonLinear: finding(nonLinear.length > 0, nonLinear[0] ?? `no non-linear use of ${c} rates`),
      timingMismatch: finding(
        mismatch.length > 0,
        mismatch[0] ?? `every ${c} rate is paid at its natural date`,
      ),
      reason: linear
        ? `${c} rates enter only as linear floating coupons paid at their natural dates (replicated by the ${c} curve)`
        : (nonLinear[0] ?? mismatch[0])!,
    };
  });

  // Currencies, FX, compo and quanto.
  const equities = deal.equities.filter((e) => usedEquities.has(e.id));
  const payments = [...deal.events.flatMap((e) => e.pay), ...deal.exercise.map((x) => x.amount)];
  const compoPays = payments.filter((p) => p.conversion?.kind === 'compo');
  const quantoPays = payments.filter((p) => p.conversion?.kind === 'quanto');
  // A foreign equity is quanto unless every payment is made in its own currency and converted at the path FX rate
  // (a compo payoff carries no quanto drift: common practice).
  const foreignEq = equities.filter(
    (e) =>
      e.currency !== deal.currency &&
      !(
        payments.length > 0 &&
        payments.every((p) => p.currency === e.currency && p.conversion?.kind === 'compo')
      ),
  );
  const fxUsed = deal.fx.filter((f) => usedFx.has(f.id));
  const fxOut = [...fxUsed];
  for (const p of compoPays)
    if (
      !fxOut.some(
        (f) =>
          (f.per === p.currency && f.units === deal.currency) ||
          (f.units === p.currency && f.per === deal.currency),
      )
    )
      fxOut.push({ id: `${p.currency}/${deal.currency}`, units: deal.currency, per: p.currency });
  const currencies = [
    ...new Set([
      deal.currency,
      ...equities.map((e) => e.currency),
      ...fxOut.flatMap((f) => [f.units, f.per]),
      ...rateCcys,
      ...payments.map((p) => p.currency),
    ]),
  ];
  const foreign = currencies.filter((c) => c !== deal.currency);
  const fxDependent = fxUsed.length > 0 || compoPays.length > 0;
  const quantoReason =
    quantoPays.length > 0
      ? `${quantoPays[0]!.amount.field} in ${quantoPays[0]!.currency} is converted at the fixed rate ${(quantoPays[0]!.conversion as { rate: number }).rate}`
      : foreignEq.length > 0
        ? `${foreignEq.map((e) => `${e.id} (${e.currency})`).join(', ')} enters a payoff paid in ${deal.currency}`
        : 'no quanto payment';

  // Path dependence.
  const pd: string[] = [];
  if (deal.running.some((r) => r.times === 'grid' || r.times.length > 0))
    pd.push('running minimum, maximum or average');
  const stateRead = programs.some(({ p }) =>
    p.nodes.some((n) => n.op === 'state' && randomStates.has(n.name)),
  );
  if (stateRead) pd.push(`state (${[...randomStates].join(', ')}) carried between dates`);
  const condTerm = terminating.filter((e) => e.when && e.times.length > 1);
  if (condTerm.length > 0) pd.push(`conditional early termination (${condTerm[0]!.label})`);
  const exTimes = [...new Set(deal.exercise.flatMap((x) => x.times))].sort((a, b) => a - b);
  const holders = [...new Set(deal.exercise.map((x) => x.by))];
  const rateDependent = rates.length > 0;
  const a: DealAnalysis = {
    format: ANALYSIS_FORMAT,
    name: deal.name,
    currency: deal.currency,
    currencies,
    equities,
    fx: fxOut,
    observables: [...uses.values()],
    rateDependent: finding(
      rateDependent,
      rateDependent
        ? `reads ${rates.map((r) => r.currency).join(', ')} rates (${[...new Set([...uses.values()].filter((u) => RATE_OPS.has(u.kind)).map((u) => u.kind))].join(', ')})`
        : 'reads no rate',
    ),
    rates,
    fxDependent: finding(
      fxDependent,
      fxDependent
        ? [
            fxUsed.length > 0 ? `reads FX ${fxUsed.map((f) => `${f.per}/${f.units}`).join(', ')}` : '',
            compoPays.length > 0 ? `converts ${compoPays[0]!.currency} payments at the path's FX rate` : '',
          ]
            .filter(Boolean)
            .join('; ')
        : 'no FX rate on the path',
    ),
    crossCurrency: finding(
      foreign.length > 0,
      foreign.length > 0
        ? `involves ${foreign.join(', ')} beside ${deal.currency}`
        : `single currency ${deal.currency}`,
    ),
    compo: finding(
      compoPays.length > 0,
      compoPays.length > 0
        ? `${compoPays[0]!.amount.field} in ${compoPays[0]!.currency} is converted at the path's FX rate`
        : 'no compo payment',
    ),
    quanto: finding(quantoPays.length > 0 || foreignEq.length > 0, quantoReason),
    pathDependent: finding(
      pd.length > 0,
      pd.length > 0 ? pd.join('; ') : 'each payment depends on levels at its own date only',
    ),
    earlyTermination: finding(
      terminating.length > 0,
      terminating.length > 0
        ? `${terminating.map((e) => e.label).join(', ')} can end the deal before its last date`
        : 'runs to its last date',
    ),
    exercise: {
      present: deal.exercise.length > 0,
      reason:
        deal.exercise.length > 0
          ? deal.exercise
              .map(
                (x) =>
                  `${x.by === 'issuer' ? 'issuer call' : 'holder put'} on ${x.times.length} date(s) (${x.label})`,
              )
              .join('; ')
          : 'no exercise right',
      holders,
      times: exTimes,
    },
    lastTime: deal.lastTime,
    gridTimes: [...deal.gridTimes],
    fundingSpread: deal.fundingSpread,
    reasons: [],
  };
  const lines: [string, Finding][] = [
    ['rates', a.rateDependent],
    ...rates.map((r): [string, Finding] => [`${r.currency} rates`, { present: true, reason: r.reason }]),
    ['FX', a.fxDependent],
    ['cross-currency', a.crossCurrency],
    ['compo', a.compo],
    ['quanto', a.quanto],
    ['path dependence', a.pathDependent],
    ['early termination', a.earlyTermination],
    ['exercise', a.exercise],
  ];
  a.reasons = lines.filter(([, f]) => f.present).map(([k, f]) => `${k}: ${f.reason}`);
  return a;
}
