/**
 * Validation of cap/floor (caplet) and swaption vol quotes. The quote type is required: a normal (absolute, in
 * rate units) and a lognormal (relative) vol of the same option differ by a factor of about the forward rate, so
 * guessing it would mis-price by that factor (common practice).
 */
import { issue, type FieldIssue } from '../errors.ts';
import type { RateVolSpec } from './types.ts';

function num(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

/**
 * Every problem with a rate-vol spec (errors and warnings), naming the cell, e.g. `rateVols.DOM.quotes[2].vol`.
 * Warnings flag vols whose size suggests the other quote type (a normal vol above 0.05 = 500 bp, a lognormal vol
 * below 0.01 = 1 %).
 */
export function rateVolIssues(spec: RateVolSpec, field = 'rateVols'): FieldIssue[] {
  const out: FieldIssue[] = [];
  if (spec === null || typeof spec !== 'object') {
    out.push(issue('E_RATE_VOLS', field, 'must be an object with instrument, type and quotes', spec));
    return out;
  }
  if (spec.instrument !== 'caplet' && spec.instrument !== 'swaption')
    out.push(
      issue(
        'E_RATE_VOL_INSTRUMENT',
        `${field}.instrument`,
        "must be 'caplet' or 'swaption'",
        spec.instrument,
      ),
    );
  const type = spec.type as unknown;
  if (type === undefined)
    out.push(
      issue(
        'E_RATE_VOL_TYPE',
        `${field}.type`,
        'is required',
        type,
        "state whether the vols are 'normal' (absolute, e.g. 0.0085 = 85 bp) or 'lognormal' (relative, e.g. 0.22)",
      ),
    );
  else if (type !== 'normal' && type !== 'lognormal')
    out.push(issue('E_RATE_VOL_TYPE', `${field}.type`, "must be 'normal' or 'lognormal'", type));
  if (spec.frequency !== undefined && !(num(spec.frequency) && spec.frequency > 0))
    out.push(
      issue(
        'E_RATE_VOL_FREQUENCY',
        `${field}.frequency`,
        'must be a number of payments per year > 0',
        spec.frequency,
      ),
    );
  if (!Array.isArray(spec.quotes) || spec.quotes.length === 0) {
    out.push(issue('E_RATE_VOL_QUOTES', `${field}.quotes`, 'must list at least one quote', spec.quotes));
    return out;
  }
  spec.quotes.forEach((q, i) => {
    const f = `${field}.quotes[${i}]`;
    if (!num(q?.expiry) || q.expiry <= 0)
      out.push(issue('E_RATE_VOL_EXPIRY', `${f}.expiry`, 'must be a time in years > 0', q?.expiry));
    if (!num(q?.tenor) || q.tenor <= 0)
      out.push(issue('E_RATE_VOL_TENOR', `${f}.tenor`, 'must be a length in years > 0', q?.tenor));
    if (q?.strike !== undefined && !num(q.strike))
      out.push(
        issue(
          'E_NOT_FINITE',
          `${f}.strike`,
          'must be a finite rate (decimal) or be left out for at the money',
          q.strike,
        ),
      );
    if (q?.strike !== undefined && num(q.strike) && type === 'lognormal' && q.strike <= 0)
      out.push(
        issue(
          'E_RATE_VOL_STRIKE',
          `${f}.strike`,
          'must be > 0 for a lognormal quote',
          q.strike,
          'quote negative strikes with normal vols',
        ),
      );
    if (!num(q?.vol) || q.vol <= 0) {
      out.push(issue('E_RATE_VOL', `${f}.vol`, 'must be a finite vol > 0', q?.vol));
      return;
    }
    if (type === 'normal' && q.vol > 0.05)
      out.push(
        issue(
          'W_RATE_VOL_SCALE',
          `${f}.vol`,
          'looks large for a normal vol (above 500 bp)',
          q.vol,
          'check that the quotes are not lognormal',
          'warning',
        ),
      );
    if (type === 'lognormal' && q.vol < 0.01)
      out.push(
        issue(
          'W_RATE_VOL_SCALE',
          `${f}.vol`,
          'looks small for a lognormal vol (below 1 %)',
          q.vol,
          'check that the quotes are not normal',
          'warning',
        ),
      );
  });
  const seen = new Map<string, number>();
  spec.quotes.forEach((q, i) => {
    const key = `${q?.expiry}|${q?.tenor}|${q?.strike ?? 'atm'}`;
    const prev = seen.get(key);
    if (prev !== undefined)
      out.push(
        issue(
          'E_RATE_VOL_DUPLICATE',
          `${field}.quotes[${i}]`,
          `must not repeat quotes[${prev}] (same expiry, tenor and strike)`,
          q,
        ),
      );
    else seen.set(key, i);
  });
  return out;
}
