/**
 * Plain-data shapes of the deal layer: the deal file as written by users, its compiled (checked, serialisable)
 * form handed to workers, and the analysis the study's rules read.
 *
 * Times are year fractions ACT/365F from the valuation date. Amounts in events are per unit of notional:
 * an event that pays `amount` pays `notional × amount` units of its currency.
 */

/** Format tag of a deal file. */
export const DEAL_FORMAT = 'factor-triage/deal@1' as const;
/** Format tag of a compiled deal. */
export const COMPILED_FORMAT = 'factor-triage/compiled-deal@1' as const;
/** Format tag of a deal analysis. */
export const ANALYSIS_FORMAT = 'factor-triage/deal-analysis@1' as const;

/** A date: ISO `YYYY-MM-DD` (converted ACT/365F from the valuation date) or a year fraction. */
export type DateInput = string | number;

/** An equity (or index) quoted in `currency`. */
export interface EquityUnderlying {
  kind: 'equity';
  currency: string;
  /** Name in the market snapshot and in the simulated paths when it differs from the deal's own id. */
  marketName?: string;
  /**
   * The initial fixing (level in `currency`) that `start()` and `perf()` read. Absent: the level on the path at the
   * valuation date. Give it for a deal already struck, so that a spot bump moves performances (hedge ratios).
   */
  initialLevel?: number;
}

/** An FX rate quoted as `units` currency per one unit of `per` (e.g. units DOM per ASH: `ASH/DOM`). */
export interface FxUnderlying {
  kind: 'fx';
  units: string;
  per: string;
  /** Initial fixing (units per one `per`) read by `start()` and `perf()`; absent: the path's level at 0. */
  initialLevel?: number;
}

export type Underlying = EquityUnderlying | FxUnderlying;

/** A schedule: explicit dates, or a start, end and step (`1D` calendar days, `1B` weekdays, `1W`, `3M`, `1Y`...). */
export type ScheduleInput = ({ dates: DateInput[] } | { start: DateInput; end: DateInput; every: string }) & {
  /** How a date that is not a business day of the deal calendar moves (default `none`: dates stay as written). */
  roll?: RollConvention;
};

/**
 * Business-day conventions (ISDA 2006 Definitions, Sec. 4.12; section number from memory): `following` moves to the
 * next business day, `preceding` to the previous one, `modifiedFollowing` to the next one unless that is in the next
 * month, then to the previous one; `none` keeps the date.
 */
export type RollConvention = 'none' | 'following' | 'modifiedFollowing' | 'preceding';

/** The deal's business days: weekdays (unless `weekends` is false) that are not listed holidays. */
export interface CalendarInput {
  /** ISO dates that are not business days. */
  holidays?: string[];
  /** Saturdays and Sundays are not business days (default true). */
  weekends?: boolean;
}

/** How a payment in a currency other than the deal's currency is turned into the deal's currency. */
export type Conversion =
  /** Converted at the FX rate on the path at the payment date. */
  | { kind: 'compo' }
  /** Converted at a fixed rate (units of the deal's currency per unit of the payment's currency). */
  | { kind: 'quanto'; rate: number };

/** One payment made by an event. */
export interface PaymentInput {
  /** Expression: amount per unit of notional in `currency`. */
  amount: string;
  /** Currency the amount is expressed in; default: the deal's currency. */
  currency?: string;
  /** Required when `currency` differs from the deal's currency. */
  conversion?: Conversion;
}

/** What happens on each date of a schedule. */
export interface EventInput {
  /** A label for reports, e.g. `coupon`, `autocall`. */
  label?: string;
  /** Schedule name. */
  on: string;
  /** Optional condition expression; the event fires on a path where it is non-zero. */
  when?: string;
  pay?: PaymentInput | PaymentInput[];
  /** State updates: state name → expression, all evaluated with the state as it was before the event. */
  set?: Record<string, string>;
  /** When true, the deal ends on every path where this event fires (after its payments and updates). */
  terminate?: boolean;
}

/** A right to end the deal early on the dates of a schedule, against a cash amount. */
export interface ExerciseInput {
  label?: string;
  on: string;
  /** `issuer`: exercised to minimise the holder's value (callable); `holder`: to maximise it (puttable). */
  by: 'issuer' | 'holder';
  /** Expression: cash per unit of notional paid to the holder on exercise. */
  amount: string;
  currency?: string;
  conversion?: Conversion;
}

/**
 * What has already happened to a deal under way: levels observed and rates fixed before the valuation date. Dates are
 * ISO `YYYY-MM-DD` strictly before `valuationDate`.
 */
export interface HistoryInput {
  /** Underlying id → date → level observed that day (an FX id in the direction the deal wrote it). */
  fixings?: Record<string, Record<string, number>>;
  /**
   * Currency → date → simple rate per year (0.031 for 3.1 %) fixed that day for the period the deal reads from it:
   * `fixing(C)` and `fixing(C, tau)` whose period starts that day, `term_rate(C, tau)` read that day.
   */
  rates?: Record<string, Record<string, number>>;
}

/** The deal file (JSON), as validated by `dealSchema`. */
export interface DealInput {
  format: typeof DEAL_FORMAT;
  name: string;
  description?: string;
  /** Valuation date, ISO. Required when any date is given as ISO text. */
  valuationDate?: string;
  notional: number;
  /** Payment (and numeraire) currency. */
  currency: string;
  /** Keyed by the id used in expressions. */
  underlyings: Record<string, Underlying>;
  /** Currencies whose short rates and bond prices the expressions may read. */
  rates?: string[];
  /** Named constants: numbers or dates (dates become year fractions). */
  parameters?: Record<string, number | string>;
  schedules: Record<string, ScheduleInput>;
  /** State variables with initial values. */
  state?: Record<string, number>;
  events: EventInput[];
  exercise?: ExerciseInput[];
  /** Issuer funding spread (continuous, per year) added to discounting of every flow of a note. */
  fundingSpread?: number;
  /** Past fixings of a deal whose schedules began before the valuation date. */
  history?: HistoryInput;
  /** Business days for schedules with a `roll` convention and for `B` (business-day) steps. */
  calendar?: CalendarInput;
}

// ---------------------------------------------------------------------------------------------------------------
// Compiled program: a plain node list per expression; node i may only refer to nodes < i.

export type UnaryFn = 'neg' | 'not' | 'abs' | 'exp' | 'log' | 'sqrt' | 'floor';
export type BinaryFn =
  'add' | 'sub' | 'mul' | 'div' | 'pow' | 'lt' | 'le' | 'gt' | 'ge' | 'eq' | 'ne' | 'and' | 'or';

/** A source of levels: an equity in its own currency, or an FX rate in the direction the deal wrote it. */
export type LevelSource = { kind: 'equity'; name: string } | { kind: 'fx'; units: string; per: string };

export type ProgramNode =
  | { op: 'num'; value: number }
  | { op: 'level'; source: LevelSource; at: 'now' | 'start' }
  | { op: 'state'; name: string }
  /** Event time (years), year fraction since the previous date of the schedule, 1-based index, date count. */
  | { op: 'time' }
  | { op: 'accrual' }
  | { op: 'index' }
  | { op: 'count' }
  /** Running minimum / maximum / average; `slot` indexes `CompiledDeal.running`. */
  | { op: 'running'; slot: number }
  | { op: 'shortRate'; currency: string }
  /**
   * Simple rate over [t − τ, t] fixed at t − τ: (1/P(t−τ, t) − 1)/τ. `tau` null: τ is the event's accrual `dt`
   * (the period since the schedule's previous date).
   */
  | {
      op: 'fixing';
      currency: string;
      tau: number | null;
      /**
       * Rates already fixed (from the deal's history) on the remaining event dates whose period started before the
       * valuation date: event time (years) → simple rate per year. Absent when no remaining period started earlier.
       */
      known?: { time: number; rate: number }[];
    }
  /** Simple rate over [t, t + tau] fixed at t. */
  | { op: 'termRate'; currency: string; tau: number }
  /** Par swap rate at t for `years` with `perYear` fixed payments. */
  | { op: 'swapRate'; currency: string; years: number; perYear: number }
  /** Zero-coupon bond P(t, T) on the path (T absolute, years). */
  | { op: 'bond'; currency: string; maturity: number }
  | { op: 'unary'; fn: UnaryFn; a: number }
  | { op: 'binary'; fn: BinaryFn; a: number; b: number }
  | { op: 'nary'; fn: 'min' | 'max'; args: number[] }
  | { op: 'select'; c: number; a: number; b: number };

/** A checked expression: its node list (root = last node) and where it came from. */
export interface Program {
  field: string;
  text: string;
  nodes: ProgramNode[];
}

export interface RunningSpec {
  fn: 'min' | 'max' | 'mean';
  source: LevelSource;
  /** Observation times (years), or `grid` for every simulation step from 0. */
  times: number[] | 'grid';
  /**
   * For a deal under way: the value after the observations before the valuation date and their number (the
   * remaining observations continue from it). Absent when nothing was observed before the valuation date.
   */
  seed?: { value: number; count: number };
}

export interface CompiledPayment {
  amount: Program;
  currency: string;
  conversion: Conversion | null;
}

export interface CompiledEvent {
  label: string;
  schedule: string;
  times: number[];
  /** Start of the first accrual period (years): the schedule's start date when rolled, else 0. */
  startTime?: number;
  /** For a deal under way: dates of the schedule before the valuation date (`index` and `count` include them). */
  pastDates?: number;
  /** `dt` of the first remaining date when its period began before the valuation date (years). */
  firstAccrual?: number;
  when: Program | null;
  pay: CompiledPayment[];
  set: { name: string; value: Program }[];
  terminate: boolean;
}

export interface CompiledExercise {
  label: string;
  schedule: string;
  times: number[];
  /** Start of the first accrual period (years): the schedule's start date when rolled, else 0. */
  startTime?: number;
  /** For a deal under way: dates of the schedule before the valuation date (`index` and `count` include them). */
  pastDates?: number;
  /** `dt` of the first remaining date when its period began before the valuation date (years). */
  firstAccrual?: number;
  by: 'issuer' | 'holder';
  amount: CompiledPayment;
}

/** The checked deal as plain, structured-cloneable data; a worker builds closures from it without mathjs. */
export interface CompiledDeal {
  format: typeof COMPILED_FORMAT;
  name: string;
  currency: string;
  notional: number;
  equities: { id: string; marketName: string; currency: string }[];
  fx: { id: string; units: string; per: string }[];
  rates: string[];
  state: { name: string; initial: number }[];
  schedules: Record<string, number[]>;
  running: RunningSpec[];
  events: CompiledEvent[];
  exercise: CompiledExercise[];
  fundingSpread: number;
  /** Every time (years) the simulation grid must contain, sorted, without 0. */
  gridTimes: number[];
  lastTime: number;
  /** For a deal under way: what happened before the valuation date. Absent for a deal with no past date. */
  history?: CompiledHistory;
}

/** One payment made before the valuation date: already paid, so not part of the value. */
export interface PastPayment {
  event: string;
  /** ISO date. */
  date: string;
  currency: string;
  /** Per unit of notional, in `currency`. */
  amount: number;
  /** notional × amount, in `currency`. */
  cash: number;
}

/** The past of a deal under way, resolved once at compile time from its history. */
export interface CompiledHistory {
  valuationDate: string;
  /** Every event date before the valuation date, in the order resolved, and whether the event fired. */
  events: { event: string; date: string; fired: boolean }[];
  payments: PastPayment[];
  /** Exercise dates before the valuation date (rights not taken; ignored). */
  ignoredExercise: { label: string; date: string }[];
  /** State variables after the past (the initial state of the remaining deal). */
  state: Record<string, number>;
}

/** A past level or rate the deal needs from its history, and whether the deal file gives it. */
export interface HistoryNeed {
  kind: 'fixing' | 'rate';
  /** Underlying id (fixing) or currency (rate). */
  name: string;
  /** ISO date. */
  date: string;
  /** Field path, e.g. `deal.history.fixings.ALDR["2026-05-23"]`. */
  field: string;
  /** What reads it, e.g. `event "coupon" on 2026-05-23`. */
  neededBy: string;
  given: boolean;
}

// ---------------------------------------------------------------------------------------------------------------
// Analysis for the study's rules.

/** A yes/no finding with its one-line reason. */
export interface Finding {
  present: boolean;
  reason: string;
}

/** One observable the deal reads, and where. */
export interface ObservableUse {
  kind:
    | 'equity'
    | 'fx'
    | 'shortRate'
    | 'fixing'
    | 'termRate'
    | 'swapRate'
    | 'bond'
    | 'running'
    | 'state'
    | 'time';
  /** Underlying id, currency or state name. */
  name: string;
  /** Field paths of the expressions that read it. */
  fields: string[];
}

/** How the deal depends on one currency's rates. */
export interface RateDependence {
  currency: string;
  /**
   * Only linear floating coupons paid at their natural date (rate fixed at the start of its accrual period,
   * paid at its end, entering the amount linearly): replicated by the curve.
   */
  linearAtNaturalDate: boolean;
  /** Caps, floors, digitals, conditions or other non-linear functions of a rate. */
  nonLinear: Finding;
  /** A rate observed at one time and paid at another (in arrears, term rates, swap rates, bond prices, state). */
  timingMismatch: Finding;
  reason: string;
}

/** What the study's rules need to know about a deal. */
export interface DealAnalysis {
  format: typeof ANALYSIS_FORMAT;
  name: string;
  /** Payment (numeraire) currency. */
  currency: string;
  /** Every currency involved (payments, equities, FX, rates). */
  currencies: string[];
  /** Equity ids used by some expression, with their market names and currencies. */
  equities: { id: string; marketName: string; currency: string }[];
  /** FX pairs used (by an expression or by a compo payment), in the direction the deal wrote them. */
  fx: { id: string; units: string; per: string }[];
  observables: ObservableUse[];
  /** Any dependence on a short rate, a fixing, a swap rate or a bond price. */
  rateDependent: Finding;
  /** One entry per currency whose rates the expressions read. */
  rates: RateDependence[];
  /** An FX rate enters a payoff or a conversion on the path (compo). */
  fxDependent: Finding;
  /** An underlying or a payment in a currency other than the deal's. */
  crossCurrency: Finding;
  /** A payment converted at the path's FX rate: needs FX vol. */
  compo: Finding;
  /** A payment converted at a fixed rate, or a foreign equity paid in the deal's currency: quanto drift. */
  quanto: Finding;
  pathDependent: Finding;
  earlyTermination: Finding;
  /** Exercise rights; `holders` lists who holds them. */
  exercise: Finding & { holders: ('issuer' | 'holder')[]; times: number[] };
  /** The deal's last date (years). */
  lastTime: number;
  /** Times the simulation grid must contain (sorted, years, without 0). */
  gridTimes: number[];
  fundingSpread: number;
  /** One line per finding that is present, for reports. */
  reasons: string[];
}
