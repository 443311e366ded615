/**
 * What would decide an undecided factor: which part of the interval Δ ± (z·SE + b) keeps it straddling τ, and what
 * reduces that part. Plain arithmetic on the decision row and its budget parts; it never changes a verdict.
 *
 * With d = ||Δ| − τ| (how far Δ sits from τ) the rule decides once z·SE + b < d. Each part p of the interval is judged
 * by the room it has if every other part stays as it is: room_p = d − (z·SE + b − p). A part with room_p ≤ 0 cannot
 * decide the factor on its own.
 */
import type { ErrorBudget, FactorLookDecision } from './decision.ts';

/** A part of the interval half-width z·SE + b. */
export type DecidingPart = 'stepHalving' | 'calibration' | 'repricing' | 'exerciseGap' | 'noise';

/** One part of the interval and what reduces it. Amounts in the deal's currency. */
export interface DecidingItem {
  part: DecidingPart;
  /** Its size: the budget part, or z·SE for `noise`. */
  size: number;
  /** Room it has if the other parts stay: d − (z·SE + b − size); ≤ 0: this part alone cannot decide. */
  room: number;
  /** What reduces it, in words. */
  remedy: string;
  /**
   * stepHalving: the largest time step (years) at which the part would fit in its room, first order in the step
   * (change ∝ h, SE of the change unchanged; common practice); null when no step can (room ≤ 0).
   */
  maxStep?: number | null;
  /** calibration / repricing: the variant that sets the part. */
  variant?: string;
  /** calibration: the quote with the largest fit error; repricing: the vanilla with the largest excess. */
  instrument?: string;
  /** calibration / repricing: that variant's vol error (decimal). */
  volError?: number;
  /**
   * calibration / repricing: the sum of the two variants' vol errors (decimal) at which the part would fit in its
   * room (the deal vega held); null when none can.
   */
  targetVolError?: number | null;
  /** exerciseGap: the dual bound's outer × inner paths now. */
  dualPaths?: { outer: number; inner: number };
  /**
   * exerciseGap: the outer path count at which the gap's noise part 2·SE (∝ 1/√outer) would bring the part into its
   * room, the gap estimate itself held; null when the gap estimate alone fills the room (a better policy or more
   * inner paths must shrink it).
   */
  outerPaths?: number | null;
  /** noise: the path count at which z·SE would fit in its room (SE ∝ 1/√n, z held); null when none can. */
  paths?: number | null;
}

/** What would decide one undecided factor. */
export interface WhatWouldDecide {
  /** The side Δ points to: 'keep' when |Δ| ≥ τ, else 'drop'. */
  side: 'keep' | 'drop';
  /** d = ||Δ| − τ|. */
  distance: number;
  /** Room for the budget: d − z·SE (≤ 0 when Δ sits on τ within z·SE: no budget reduction alone decides). */
  slack: number;
  /** The largest part of the interval (null when the interval already clears τ and only the step-down stopped). */
  largest: DecidingPart | null;
  /** The non-zero parts, largest first. */
  items: DecidingItem[];
  /** One sentence for the verdict's reason. */
  summary: string;
}

/** Information about the variants behind a factor's budget parts. */
export interface DecidingContext {
  /** Paths of the decision row. */
  paths: number;
  /** Paths per batch: suggested path counts are rounded up to a multiple of it. */
  batchSize: number;
  /** Largest simulation step of the study (years). */
  maxStep: number;
  /** The raw change of Δ on the halved grid, with its SE (null when not recorded). */
  stepChange: { value: number; se: number } | null;
  /** |deal vega| per unit of vol (decimal), null when not computed. */
  vegaPerUnit: number | null;
  /** The variant and quote with the largest analytic fit error of the two variants of Δ. */
  calibration: { variant: string; instrument: string; volError: number } | null;
  /** The variant and vanilla with the largest repricing excess of the two variants of Δ. */
  repricing: { variant: string; instrument: string; volExcess: number } | null;
  /**
   * The dual bound of the two variants (deals with exercise rights): its outer × inner paths, and the two variants'
   * summed gap estimates and summed noise parts 2·SE (the exercise-gap part is their sum).
   */
  dual: { outer: number; inner: number; gap?: number; noise?: number } | null;
}

const pct = (x: number) => `${(Math.round(x * 1e4) / 100).toFixed(2)} vol points`;
const amt = (x: number) => (Math.abs(x) >= 100 ? x.toFixed(0) : x.toPrecision(3));
const days = (t: number) => `${Math.round(t * 365 * 10) / 10} days`;

/**
 * The parts of an undecided factor's interval, largest first, each with what reduces it (see the module note).
 * `decision` is the factor's row at its last look, `parts` its budget parts (their sum is `decision.budget`).
 */
export function whatWouldDecide(args: {
  decision: Pick<FactorLookDecision, 'delta' | 'se' | 'z' | 'budget'>;
  tau: number;
  parts: ErrorBudget;
  context: DecidingContext;
}): WhatWouldDecide {
  const { decision: d, tau, parts, context: c } = args;
  const distance = Math.abs(Math.abs(d.delta) - tau);
  const zse = d.z * d.se;
  const b = d.budget;
  const slack = distance - zse;
  const side: 'keep' | 'drop' = Math.abs(d.delta) >= tau ? 'keep' : 'drop';
  const roomOf = (size: number) => distance - (zse + b - size);
  const items: DecidingItem[] = [];

  if (parts.stepHalving > 0) {
    const room = roomOf(parts.stepHalving);
    // Budget part at step h: max(0, |change|·h/h₀ − 2·SE) (change first order in h, SE held); it fits in `room`
    // for h ≤ h₀·(room + 2·SE)/|change|.
    const ch = c.stepChange ? Math.abs(c.stepChange.value) : parts.stepHalving;
    const se = c.stepChange ? c.stepChange.se : 0;
    const h = room > 0 && ch > 0 ? Math.min(c.maxStep, (c.maxStep * (room + 2 * se)) / ch) : null;
    items.push({
      part: 'stepHalving',
      size: parts.stepHalving,
      room,
      maxStep: h,
      remedy:
        h === null
          ? 'no time step can: Δ sits on τ within the other parts of the interval'
          : `a largest time step of about ${days(h)} (now ${days(c.maxStep)}; first order in the step)`,
    });
  }
  if (parts.calibration > 0) {
    const room = roomOf(parts.calibration);
    const v = c.vegaPerUnit;
    const target = room > 0 && v !== null && v > 0 ? room / v : null;
    const who = c.calibration;
    items.push({
      part: 'calibration',
      size: parts.calibration,
      room,
      ...(who ? { variant: who.variant, instrument: who.instrument, volError: who.volError } : {}),
      targetVolError: target,
      remedy:
        (who
          ? `a closer fit of ${who.variant} at ${who.instrument} (fit error ${pct(who.volError)})`
          : 'a closer fit of the two variants') +
        (target === null
          ? '; no refit alone can: the other parts fill the room'
          : `; the two fit errors must sum below ${pct(target)}`),
    });
  }
  if ((parts.repricing ?? 0) > 0) {
    const size = parts.repricing!;
    const room = roomOf(size);
    const v = c.vegaPerUnit;
    const target = room > 0 && v !== null && v > 0 ? room / v : null;
    const who = c.repricing;
    items.push({
      part: 'repricing',
      size,
      room,
      ...(who ? { variant: who.variant, instrument: who.instrument, volError: who.volExcess } : {}),
      targetVolError: target,
      remedy:
        (who
          ? `${who.variant} repricing ${who.instrument} within its noise (now ${pct(who.volExcess)} beyond 2 SE): a finer step or a fit under the simulated scheme`
          : 'the two variants repricing their vanillas within noise') +
        (target === null
          ? '; that alone cannot decide: the other parts fill the room'
          : `; the two excesses must sum below ${pct(target)}`),
    });
  }
  if ((parts.exerciseGap ?? 0) > 0) {
    const size = parts.exerciseGap!;
    const room = roomOf(size);
    const du = c.dual;
    // The part is gap + 2·SE(gap) summed over the two variants; the 2·SE share falls as 1/√outer (independent outer
    // paths), so it fits when gap + noise·√(outer/outer′) ≤ room.
    let outer: number | null | undefined;
    if (du && du.gap !== undefined && du.noise !== undefined) {
      const gap = Math.max(0, du.gap);
      outer =
        room > gap && du.noise > 0
          ? Math.max(du.outer, Math.ceil(du.outer * ((du.noise / (room - gap)) * (du.noise / (room - gap)))))
          : null;
    }
    items.push({
      part: 'exerciseGap',
      size,
      room,
      ...(du ? { dualPaths: { outer: du.outer, inner: du.inner } } : {}),
      ...(outer !== undefined ? { outerPaths: outer } : {}),
      remedy:
        room <= 0
          ? `a smaller bound gap${du ? ` (dual bound now ${du.outer} × ${du.inner} paths)` : ''}; that alone cannot decide: the other parts fill the room`
          : typeof outer === 'number'
            ? `about ${outer} outer paths for the dual bound (now ${du!.outer}; its noise 2·SE ∝ 1/√outer)`
            : `a better exercise policy (more regression paths) or more inner paths${du ? ` (now ${du.outer} × ${du.inner})` : ''}: the gap estimate itself fills the room`,
    });
  }
  if (zse > 0) {
    const room = roomOf(zse);
    // SE ∝ 1/√n (independent paths): z·SE·√(n/n′) ≤ room  ⇔  n′ ≥ n·(z·SE/room)².
    let n: number | null = null;
    if (room > 0) {
      const want = c.paths * (zse / room) * (zse / room);
      const bs = Math.max(1, c.batchSize);
      n = Math.max(c.paths, Math.ceil(want / bs) * bs);
    }
    items.push({
      part: 'noise',
      size: zse,
      room,
      paths: n,
      remedy:
        n === null
          ? 'no path count can: the error budget alone reaches τ'
          : `about ${n} paths (now ${c.paths}; SE ∝ 1/√n at the same z)`,
    });
  }
  items.sort((x, y) => y.size - x.size);
  const clear = distance - zse - b > 0;
  const largest = clear ? null : (items[0]?.part ?? null);
  const names: Record<DecidingPart, string> = {
    stepHalving: 'the step-halving part',
    calibration: 'the calibration part',
    repricing: 'the repricing part',
    exerciseGap: 'the exercise gap',
    noise: 'Monte Carlo noise z·SE',
  };
  let summary: string;
  if (clear)
    summary =
      "the interval clears τ, but Holm's step-down stopped at a factor ranked before it: deciding that factor decides this one";
  else if (items.length === 0) summary = 'Δ sits on τ exactly; nothing but a different threshold decides it';
  else {
    const top = items[0]!;
    const rest = items
      .slice(1)
      .filter((x) => x.room > 0)
      .map((x) => `${names[x.part]} (${amt(x.size)}): ${x.remedy}`);
    summary =
      `largest is ${names[top.part]} (${amt(top.size)} of the half-width ${amt(zse + b)}, Δ ${amt(distance)} from τ): ${top.remedy}` +
      (rest.length ? `; also ${rest.join('; ')}` : '');
  }
  return { side, distance, slack, largest, items, summary };
}
