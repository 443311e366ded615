/**
 * Reading a market snapshot: a zod schema for its shape, then the semantic checks of each part (curves, vol grids
 * and their static arbitrage, rate vols, FX, correlations). Every problem becomes a FieldIssue whose `field` is the
 * dotted path into the file (`curves.DOM.zeroRates[2]`); errors stop, warnings travel with the snapshot.
 */
import { z } from 'zod';
import { EngineError, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import { makeCurve, curveIssues } from './curve.ts';
import { parseIsoDate } from './dates.ts';
import { equityForward } from './equity.ts';
import { correlationIssues } from './correlation.ts';
import { rateVolIssues } from './rateVols.ts';
import { checkVolArbitrage, makeVolSurface, volGridIssues, type VolSurface } from './volSurface.ts';
import type { DiscountCurve, MarketSnapshot } from './types.ts';

const SCHEMA_ID = 'factor-triage/market@1';

function buildSchema(strict: boolean) {
  const obj = <T extends z.ZodRawShape>(shape: T) => (strict ? z.strictObject(shape) : z.object(shape));
  const nums = z.array(z.number());
  const curve = obj({
    currency: z.string(),
    times: nums,
    zeroRates: nums.optional(),
    discountFactors: nums.optional(),
  });
  const volGrid = obj({
    expiries: nums,
    strikes: nums.optional(),
    moneyness: nums.optional(),
    vols: z.array(nums),
  });
  const equity = obj({
    currency: z.string(),
    spot: z.number(),
    divYield: z.number(),
    dividends: z.array(obj({ t: z.number(), amount: z.number() })).optional(),
    vols: volGrid,
  });
  // instrument and type are checked by rateVolIssues, which explains what to write.
  const rateVols = obj({
    instrument: z.string().optional(),
    type: z.string().optional(),
    quotes: z.array(
      obj({ expiry: z.number(), tenor: z.number(), strike: z.number().optional(), vol: z.number() }),
    ),
    frequency: z.number().optional(),
  });
  const fx = obj({ foreign: z.string(), domestic: z.string(), spot: z.number(), vol: z.number() });
  return obj({
    schema: z.literal(SCHEMA_ID),
    date: z.string(),
    name: z.string().optional(),
    domestic: z.string(),
    curves: z.record(z.string(), curve),
    equities: z.record(z.string(), equity),
    rateVols: z.record(z.string(), rateVols).optional(),
    fx: z.record(z.string(), fx).optional(),
    correlation: obj({ names: z.array(z.string()), matrix: z.array(nums) }),
    correlationRanges: z.record(z.string(), z.tuple([z.number(), z.number()])).optional(),
  });
}

const strictSchema = buildSchema(true);
const looseSchema = buildSchema(false);

/** Dotted path with indices in brackets: ['curves', 'DOM', 'zeroRates', 2] → `curves.DOM.zeroRates[2]`. */
export function dottedPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const p of path) {
    if (typeof p === 'number') s += `[${p}]`;
    else s += s.length === 0 ? String(p) : `.${String(p)}`;
  }
  return s || '(root)';
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let v: unknown = root;
  for (const p of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[p];
  }
  return v;
}

function schemaIssues(json: unknown): { errors: FieldIssue[]; warnings: FieldIssue[] } {
  const r = strictSchema.safeParse(json);
  const errors: FieldIssue[] = [];
  const warnings: FieldIssue[] = [];
  if (r.success) return { errors, warnings };
  for (const zi of r.error.issues) {
    if (zi.code === 'unrecognized_keys') {
      for (const key of zi.keys) {
        const field = dottedPath([...zi.path, key]);
        warnings.push(
          issue(
            'W_UNKNOWN_FIELD',
            field,
            'is not a field of the market snapshot and is ignored',
            valueAt(json, [...zi.path, key]),
            'check its spelling',
            'warning',
          ),
        );
      }
      continue;
    }
    const field = dottedPath(zi.path);
    const value = valueAt(json, zi.path);
    const hint =
      zi.path.length === 1 && zi.path[0] === 'schema' ? `write "schema": "${SCHEMA_ID}"` : undefined;
    errors.push(
      issue('E_SCHEMA', field, zi.message.replace(/^Invalid input: /, 'must be valid: '), value, hint),
    );
  }
  return { errors, warnings };
}

const DRIVER = /^(eq|var|rate|fx):(.+)$/;

function semanticIssues(s: MarketSnapshot): FieldIssue[] {
  const out: FieldIssue[] = [];
  try {
    parseIsoDate(s.date, 'date');
  } catch (e) {
    if (e instanceof EngineError) out.push(...e.issues);
    else throw e;
  }
  if (!(s.domestic in s.curves))
    out.push(
      issue(
        'E_MISSING_CURVE',
        'domestic',
        'must name a currency with a curve in curves',
        s.domestic,
        `add curves.${s.domestic}`,
      ),
    );
  const curves: Record<string, DiscountCurve> = {};
  for (const [ccy, spec] of Object.entries(s.curves)) {
    const f = `curves.${ccy}`;
    if (spec.currency !== ccy)
      out.push(
        issue(
          'E_CURVE_CURRENCY',
          `${f}.currency`,
          `must equal its key ${JSON.stringify(ccy)}`,
          spec.currency,
        ),
      );
    const ci = curveIssues(spec, f);
    out.push(...ci);
    if (ci.length === 0) curves[ccy] = makeCurve(spec, f);
  }
  for (const [name, eq] of Object.entries(s.equities)) {
    const f = `equities.${name}`;
    const curve = curves[eq.currency];
    if (!(eq.currency in s.curves))
      out.push(
        issue(
          'E_MISSING_CURVE',
          `${f}.currency`,
          'must name a currency with a curve in curves',
          eq.currency,
          `add curves.${eq.currency}`,
        ),
      );
    if (!(Number.isFinite(eq.spot) && eq.spot > 0))
      out.push(issue('E_NOT_POSITIVE', `${f}.spot`, 'must be a finite price > 0', eq.spot));
    if (!Number.isFinite(eq.divYield))
      out.push(issue('E_NOT_FINITE', `${f}.divYield`, 'must be a finite number', eq.divYield));
    (eq.dividends ?? []).forEach((d, i) => {
      if (!(d.t > 0))
        out.push(
          issue(
            'E_DIVIDEND_TIME',
            `${f}.dividends[${i}].t`,
            'must be a time in years > 0 (future dividends only)',
            d.t,
          ),
        );
      if (!(d.amount >= 0))
        out.push(
          issue('E_DIVIDEND_AMOUNT', `${f}.dividends[${i}].amount`, 'must be a cash amount >= 0', d.amount),
        );
    });
    const vi = volGridIssues(eq.vols, `${f}.vols`);
    out.push(...vi);
    const eqOk = vi.length === 0 && curve !== undefined && eq.spot > 0 && Number.isFinite(eq.divYield);
    if (!eqOk) continue;
    try {
      const surface = makeVolSurface(eq.vols, eq.spot, (t) => equityForward(eq, curve, t, f), `${f}.vols`);
      out.push(...checkVolArbitrage(surface));
    } catch (e) {
      if (e instanceof EngineError) out.push(...e.issues);
      else throw e;
    }
  }
  for (const [ccy, rv] of Object.entries(s.rateVols ?? {})) {
    const f = `rateVols.${ccy}`;
    if (!(ccy in s.curves))
      out.push(issue('E_MISSING_CURVE', f, 'must be keyed by a currency with a curve in curves', ccy));
    out.push(...rateVolIssues(rv, f));
  }
  for (const [key, q] of Object.entries(s.fx ?? {})) {
    const f = `fx.${key}`;
    for (const side of ['foreign', 'domestic'] as const)
      if (!(q[side] in s.curves))
        out.push(
          issue(
            'E_MISSING_CURVE',
            `${f}.${side}`,
            'must name a currency with a curve in curves',
            q[side],
            `add curves.${q[side]}`,
          ),
        );
    if (!(Number.isFinite(q.spot) && q.spot > 0))
      out.push(
        issue(
          'E_NOT_POSITIVE',
          `${f}.spot`,
          `must be a finite rate > 0 (${q.domestic} per ${q.foreign})`,
          q.spot,
        ),
      );
    if (!(Number.isFinite(q.vol) && q.vol > 0))
      out.push(issue('E_FX_VOL', `${f}.vol`, 'must be a finite lognormal vol > 0', q.vol));
    if (key !== `${q.foreign}/${q.domestic}`)
      out.push(
        issue(
          'W_FX_KEY',
          f,
          `is usually keyed ${q.foreign}/${q.domestic} (foreign/domestic)`,
          key,
          undefined,
          'warning',
        ),
      );
  }
  const corr = correlationIssues(s.correlation, 'correlation');
  out.push(...corr);
  s.correlation.names.forEach((nm, i) => {
    const m = DRIVER.exec(nm);
    const f = `correlation.names[${i}]`;
    if (!m) {
      out.push(issue('E_DRIVER_NAME', f, 'must be a driver name eq:NAME, var:NAME, rate:CCY or fx:NAME', nm));
      return;
    }
    const [, kind, ref] = m;
    const known =
      kind === 'eq' || kind === 'var'
        ? ref! in s.equities
        : kind === 'rate'
          ? ref! in s.curves
          : ref! in (s.fx ?? {});
    if (!known)
      out.push(
        issue(
          'W_DRIVER_UNKNOWN',
          f,
          `refers to ${ref} which is not in the snapshot`,
          nm,
          'its correlations are not used',
          'warning',
        ),
      );
  });
  for (const [key, range] of Object.entries(s.correlationRanges ?? {})) {
    const f = `correlationRanges.${key}`;
    const parts = key.split('|');
    if (parts.length !== 2) {
      out.push(issue('E_RANGE_KEY', f, 'must be keyed A|B with two driver names', key));
      continue;
    }
    for (const p of parts)
      if (!s.correlation.names.includes(p))
        out.push(
          issue(
            'W_RANGE_DRIVER',
            f,
            `names ${p}, which is not in correlation.names`,
            key,
            undefined,
            'warning',
          ),
        );
    const [lo, hi] = range;
    if (!(lo >= -1 && hi <= 1 && lo <= hi))
      out.push(issue('E_RANGE', f, 'must be [low, high] with -1 <= low <= high <= 1', range));
  }
  return out;
}

/**
 * Validates and reads a market snapshot from parsed JSON. Throws EngineError (code of the first error) whose
 * `issues` list every error and warning found; returns the snapshot and its warnings otherwise.
 */
export function parseSnapshot(json: unknown): { snapshot: MarketSnapshot; warnings: FieldIssue[] } {
  const { errors, warnings } = schemaIssues(json);
  if (errors.length > 0) throwIfErrors([...errors, ...warnings], 'E_SCHEMA');
  const snapshot = looseSchema.parse(json) as MarketSnapshot;
  const all = [...warnings, ...semanticIssues(snapshot)];
  throwIfErrors(all, 'E_INVALID_MARKET');
  return { snapshot, warnings: all };
}

/** Discount curve per currency of a (validated) snapshot. */
export function snapshotCurves(snapshot: MarketSnapshot): Record<string, DiscountCurve> {
  const out: Record<string, DiscountCurve> = {};
  for (const [ccy, spec] of Object.entries(snapshot.curves)) out[ccy] = makeCurve(spec, `curves.${ccy}`);
  return out;
}

/** Implied-vol surface per equity of a (validated) snapshot, with forwards from its currency's curve. */
export function snapshotVolSurfaces(snapshot: MarketSnapshot): Record<string, VolSurface> {
  const curves = snapshotCurves(snapshot);
  const out: Record<string, VolSurface> = {};
  for (const [name, eq] of Object.entries(snapshot.equities)) {
    const curve = curves[eq.currency];
    if (!curve)
      throw new EngineError('E_MISSING_CURVE', `equities.${name}.currency has no curve`, [
        issue(
          'E_MISSING_CURVE',
          `equities.${name}.currency`,
          'must name a currency with a curve',
          eq.currency,
        ),
      ]);
    out[name] = makeVolSurface(
      eq.vols,
      eq.spot,
      (t) => equityForward(eq, curve, t, `equities.${name}`),
      `equities.${name}.vols`,
    );
  }
  return out;
}

/**
 * {@link parseSnapshot} from JSON text: a syntax error becomes EngineError `E_JSON` naming the line and column
 * where parsing stopped, so a hand-edited file can be fixed.
 */
export function parseSnapshotText(
  text: string,
  source = 'market file',
): { snapshot: MarketSnapshot; warnings: FieldIssue[] } {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    const m = /position (\d+)/.exec(msg);
    let where = '';
    if (m) {
      const pos = Number(m[1]);
      const before = text.slice(0, pos);
      const line = before.split('\n').length;
      const column = pos - before.lastIndexOf('\n');
      where = ` at line ${line}, column ${column}`;
    }
    const i = issue(
      'E_JSON',
      source,
      `must be valid JSON${where}`,
      msg,
      'fix the syntax (a missing comma or quote is the usual cause)',
    );
    throw new EngineError('E_JSON', i.message, [i]);
  }
  return parseSnapshot(json);
}
