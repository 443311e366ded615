/**
 * Rules (DESIGN step 3): read the deal analysis and mark each factor group `required`, `candidate` or `notNeeded`,
 * each with a one-line reason. Rules never decide a candidate: the simulation does.
 */
import type { DealAnalysis } from '../deal/types.ts';

/** The factor groups of the ladder (grouped by asset class so k stays small). */
export type FactorId = 'stochVol' | 'domesticRate' | 'foreignRate';

/** Every factor id, in ladder bit order (bit 0 = stochVol, bit 1 = domesticRate, bit 2 = foreignRate). */
export const FACTOR_IDS: readonly FactorId[] = ['stochVol', 'domesticRate', 'foreignRate'];

/** Display names of the factors. */
export const FACTOR_LABELS: Record<FactorId, string> = {
  stochVol: 'stochastic volatility of the equities (Heston)',
  domesticRate: 'stochastic domestic short rate (Hull–White 1F)',
  foreignRate: 'stochastic foreign short rate (Hull–White 1F)',
};

export type FactorStatus = 'required' | 'candidate' | 'notNeeded';

/** The rules' finding for one factor group. */
export interface FactorRule {
  factor: FactorId;
  status: FactorStatus;
  reason: string;
}

/** Adjustable thresholds of the rules (years). */
export interface RuleSettings {
  /** Beyond this last date (years), stochastic rates become a candidate even for a payoff that reads no rate. */
  rateCandidateMaturity: number;
  /** Beyond this last date (years), an early-termination deal makes stochastic rates a candidate. */
  terminationRateMaturity: number;
  /** Beyond this last date (years), a European payoff on one equity makes stochastic vol a candidate (vol of forward vol). */
  volCandidateMaturity: number;
}

/** Default rule thresholds (common practice, adjustable per study). */
export const DEFAULT_RULE_SETTINGS: RuleSettings = {
  rateCandidateMaturity: 5,
  terminationRateMaturity: 2,
  volCandidateMaturity: 30,
};

/** What the rules return: one entry per factor group, plus deal-wide notes (quanto drift, FX vol). */
export interface RulesResult {
  factors: FactorRule[];
  notes: string[];
  settings: RuleSettings;
}

function years(t: number): string {
  return `${Math.round(t * 100) / 100}y`;
}

/** Applies the rules to a deal analysis. */
export function applyRules(a: DealAnalysis, settings: RuleSettings = DEFAULT_RULE_SETTINGS): RulesResult {
  const notes: string[] = [];
  const T = a.lastTime;
  const exercise = a.exercise.present;
  const rules: FactorRule[] = [];

  // --- stochastic volatility of the equities
  if (a.equities.length === 0) {
    rules.push({ factor: 'stochVol', status: 'notNeeded', reason: 'the payoff reads no equity' });
  } else {
    const why: string[] = [];
    if (a.pathDependent.present) why.push(`path dependent (${a.pathDependent.reason})`);
    if (a.earlyTermination.present) why.push(`early termination (${a.earlyTermination.reason})`);
    if (exercise) why.push(`exercise rights (${a.exercise.reason})`);
    if (a.equities.length > 1)
      why.push('several equities: the joint distribution is not fixed by the vanillas');
    if (a.rateDependent.present)
      why.push('the payoff combines the equity with a rate: the equity vanillas do not span their joint law');
    if (a.compo.present || a.quanto.present)
      why.push('the equity is paid through an FX conversion, which the single-asset vanillas do not span');
    if (why.length === 0 && T > settings.volCandidateMaturity)
      why.push(`last date ${years(T)} beyond the quoted vol surface`);
    if (why.length > 0) rules.push({ factor: 'stochVol', status: 'candidate', reason: why.join('; ') });
    else
      rules.push({
        factor: 'stochVol',
        status: 'notNeeded',
        reason:
          'a European payoff on one equity at one date is replicated by the vanillas the model is calibrated to (Breeden & Litzenberger 1978)',
      });
  }

  // --- stochastic rates, domestic then foreign
  const rateRule = (factor: FactorId, ccys: string[]): FactorRule => {
    const deps = a.rates.filter((r) => ccys.includes(r.currency));
    const required = deps.filter((r) => r.nonLinear.present || r.timingMismatch.present);
    if (required.length > 0) {
      const r = required[0]!;
      return {
        factor,
        status: 'required',
        reason: `${r.currency} rates: ${r.nonLinear.present ? r.nonLinear.reason : r.timingMismatch.reason}`,
      };
    }
    const why: string[] = [];
    if (T > settings.rateCandidateMaturity)
      why.push(`long maturity (${years(T)} > ${years(settings.rateCandidateMaturity)})`);
    if (exercise)
      why.push(`exercise rights (${a.exercise.reason}): the exercise decision depends on the rate level`);
    if (a.earlyTermination.present && T > settings.terminationRateMaturity)
      why.push(`early termination with last date ${years(T)}: the payment date depends on the path`);
    if (factor === 'foreignRate' && (a.compo.present || a.fxDependent.present))
      why.push('an FX rate on the path: its drift is the rate differential');
    if (why.length > 0) return { factor, status: 'candidate', reason: why.join('; ') };
    if (deps.length > 0)
      return {
        factor,
        status: 'notNeeded',
        reason: `linear floating coupons paid at their natural dates are replicated by the ${ccys.join('/')} curve`,
      };
    return {
      factor,
      status: 'notNeeded',
      reason: `the payoff reads no ${ccys.join('/')} rate and its last date ${years(T)} is short`,
    };
  };
  rules.push(rateRule('domesticRate', [a.currency]));
  const foreign = a.currencies.filter((c) => c !== a.currency);
  if (foreign.length > 0) rules.push(rateRule('foreignRate', foreign));
  else rules.push({ factor: 'foreignRate', status: 'notNeeded', reason: 'single-currency deal' });

  if (a.quanto.present)
    notes.push(
      `quanto: every variant carries the quanto drift −ρ·σ_S·σ_X (${a.quanto.reason}); it is not a factor to drop`,
    );
  if (a.compo.present) notes.push(`compo: FX volatility is required in every variant (${a.compo.reason})`);
  if (exercise)
    notes.push('early exercise: the error budget needs the gap between exercise lower and upper bounds');
  return { factors: rules, notes, settings };
}

/** The candidate factors (those the ladder varies), in ladder bit order. */
export function candidateFactors(r: RulesResult): FactorId[] {
  return FACTOR_IDS.filter((f) => r.factors.find((x) => x.factor === f)?.status === 'candidate');
}

/** The required factors (present in every variant). */
export function requiredFactors(r: RulesResult): FactorId[] {
  return FACTOR_IDS.filter((f) => r.factors.find((x) => x.factor === f)?.status === 'required');
}
