/**
 * `factor-triage quote FILE [--json]`: prices a list of instruments under the models and market a quotes file gives,
 * in input order, as an aligned table or as JSON. File format `factor-triage/quotes@1` (validated with zod; every bad
 * field is named by its path):
 *
 *   { "format": "factor-triage/quotes@1", "name"?: string,
 *     "curves": { CCY: { "flat": r } | { "times": [...], "zeroRates" | "discountFactors": [...] } },
 *     "models": { ID: { "kind": "black-scholes" | "heston" | "bs-hull-white" | "hull-white", ... } },
 *     "instruments": [ { "kind": "european" | "zero-bond-option" | "caplet" | "swaption", "model": ID, ... } ] }
 *
 * Model kinds: black-scholes, heston, bs-hull-white (equity vol a number or piecewise constant `{ volTimes, vols }`),
 * quanto (equity in a foreign currency paid at a fixed FX rate; `curve` pays, `foreignCurve` is the equity's),
 * hull-white (rate options).
 * Implied vols: Black–Scholes (lognormal) for equity options, with the curve's zero rate to expiry; normal (Bachelier)
 * vols for caplets and swaptions, on the forward rate and annuity of the curve.
 */
import { readFile } from 'node:fs/promises';
import { z } from 'zod';
import type { CliIo } from '../main.ts';
import { EXIT } from '../main.ts';
import { EngineError, toPlainError } from '../../engine/errors.ts';
import { flatCurve, makeCurve } from '../../engine/market/curve.ts';
import type { DiscountCurve } from '../../engine/market/types.ts';
import {
  bachelierImpliedVol,
  bsHullWhite,
  bsImpliedVol,
  bsPrice,
  hestonCos,
  makeHullWhite,
  quantoEuropean,
  type HullWhiteModel,
} from '../../engine/models/index.ts';

export const summary =
  'Price a list of instruments (equity options, bond options, caplets, swaptions) from a quotes file.';
export const usage = [
  'usage: factor-triage quote FILE [--json]',
  '',
  '  FILE    a quotes file (format "factor-triage/quotes@1"): curves, models and instruments',
  '  --json  print the results as JSON instead of a table',
].join('\n');

export const QUOTES_FORMAT = 'factor-triage/quotes@1';
export const QUOTE_RESULTS_FORMAT = 'factor-triage/quote-results@1';
const CAUTION =
  "Model output informs pricing decisions; it is not investment advice. Model choice remains subject to your firm's model-risk policy and independent validation.";

const num = z.number();
const pos = z.number().positive();
const nonNeg = z.number().nonnegative();
const corr = z.number().min(-1).max(1);

const curveSchema = z.union([
  z.object({ flat: num }).strict(),
  z
    .object({
      times: z.array(pos).min(1),
      zeroRates: z.array(num).optional(),
      discountFactors: z.array(pos).optional(),
    })
    .strict(),
]);

const equityBase = { curve: z.string(), spot: pos, divYield: num.default(0) };
const modelSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('black-scholes'), ...equityBase, vol: nonNeg }).strict(),
  z
    .object({
      kind: z.literal('heston'),
      ...equityBase,
      v0: nonNeg,
      kappa: pos,
      theta: nonNeg,
      sigma: pos,
      rho: corr,
    })
    .strict(),
  z
    .object({
      kind: z.literal('bs-hull-white'),
      ...equityBase,
      vol: z.union([
        nonNeg,
        z.object({ volTimes: z.array(pos).min(1), vols: z.array(nonNeg).min(1) }).strict(),
      ]),
      a: pos,
      sigma: nonNeg,
      rho: corr,
    })
    .strict(),
  z.object({ kind: z.literal('hull-white'), curve: z.string(), a: pos, sigma: nonNeg }).strict(),
  z
    .object({
      kind: z.literal('quanto'),
      curve: z.string(),
      foreignCurve: z.string(),
      spot: pos,
      divYield: num.default(0),
      vol: nonNeg,
      fxVol: nonNeg,
      rho: corr,
      fixedFx: pos,
    })
    .strict(),
]);

const instrumentSchema = z.discriminatedUnion('kind', [
  z
    .object({
      kind: z.literal('european'),
      id: z.string().optional(),
      model: z.string(),
      type: z.enum(['call', 'put']),
      strike: pos,
      expiry: pos,
      quantity: num.default(1),
    })
    .strict(),
  z
    .object({
      kind: z.literal('zero-bond-option'),
      id: z.string().optional(),
      model: z.string(),
      type: z.enum(['call', 'put']),
      expiry: pos,
      bondMaturity: pos,
      strike: pos,
      notional: num.default(1),
    })
    .strict(),
  z
    .object({
      kind: z.literal('caplet'),
      id: z.string().optional(),
      model: z.string(),
      type: z.enum(['cap', 'floor']),
      fixing: pos,
      payment: pos,
      strike: num,
      notional: num.default(1),
    })
    .strict(),
  z
    .object({
      kind: z.literal('swaption'),
      id: z.string().optional(),
      model: z.string(),
      type: z.enum(['payer', 'receiver']),
      expiry: pos,
      tenor: pos,
      frequency: z.number().int().positive().default(1),
      strike: num,
      notional: num.default(1),
    })
    .strict(),
]);

export const quotesFileSchema = z
  .object({
    format: z.literal(QUOTES_FORMAT),
    name: z.string().optional(),
    curves: z.record(z.string(), curveSchema),
    models: z.record(z.string(), modelSchema),
    instruments: z.array(instrumentSchema).min(1),
  })
  .strict();

export type QuotesFile = z.infer<typeof quotesFileSchema>;
type Instrument = QuotesFile['instruments'][number];
type ModelSpec = QuotesFile['models'][string];

/** One priced line. */
export interface QuoteResult {
  index: number;
  id: string;
  kind: Instrument['kind'];
  model: string;
  modelKind: ModelSpec['kind'];
  /** Present value in the curve's currency (× quantity or notional). */
  price?: number;
  impliedVol?: number;
  impliedVolKind?: 'lognormal' | 'normal';
  error?: string;
}

function pathOf(path: PropertyKey[]): string {
  return path.reduce<string>(
    (s, p) => (typeof p === 'number' ? `${s}[${p}]` : s ? `${s}.${String(p)}` : String(p)),
    '',
  );
}

/** Validates the parsed JSON; returns the file or a list of one-line problems naming each field. */
export function parseQuotesFile(
  data: unknown,
): { ok: true; file: QuotesFile } | { ok: false; problems: string[] } {
  const r = quotesFileSchema.safeParse(data);
  if (!r.success) {
    return {
      ok: false,
      problems: r.error.issues.map((i) => {
        const where = pathOf(i.path as PropertyKey[]) || '(top level)';
        return `${where}: ${i.message}`;
      }),
    };
  }
  const f = r.data;
  const problems: string[] = [];
  for (const [id, m] of Object.entries(f.models)) {
    const have = Object.keys(f.curves).join(', ') || 'none';
    if (!f.curves[m.curve])
      problems.push(`models.${id}.curve: no curve "${m.curve}" in curves (have: ${have})`);
    if (m.kind === 'quanto' && !f.curves[m.foreignCurve])
      problems.push(`models.${id}.foreignCurve: no curve "${m.foreignCurve}" in curves (have: ${have})`);
    if (
      m.kind === 'bs-hull-white' &&
      typeof m.vol === 'object' &&
      m.vol.volTimes.length !== m.vol.vols.length
    )
      problems.push(
        `models.${id}.vol.volTimes: must have as many entries as vol.vols (${m.vol.vols.length}), got ${m.vol.volTimes.length}`,
      );
  }
  f.instruments.forEach((ins, i) => {
    const m = f.models[ins.model];
    if (!m) {
      problems.push(
        `instruments[${i}].model: no model "${ins.model}" in models (have: ${Object.keys(f.models).join(', ')})`,
      );
      return;
    }
    const equityModel = m.kind !== 'hull-white';
    if (ins.kind === 'european' && !equityModel)
      problems.push(
        `instruments[${i}].model: a european option needs an equity model, "${ins.model}" is ${m.kind}`,
      );
    if (ins.kind !== 'european' && equityModel)
      problems.push(
        `instruments[${i}].model: a ${ins.kind} needs a hull-white model, "${ins.model}" is ${m.kind}`,
      );
    if (ins.kind === 'zero-bond-option' && !(ins.bondMaturity > ins.expiry))
      problems.push(
        `instruments[${i}].bondMaturity: must be after expiry ${ins.expiry} (got ${ins.bondMaturity})`,
      );
    if (ins.kind === 'caplet' && !(ins.payment > ins.fixing))
      problems.push(`instruments[${i}].payment: must be after fixing ${ins.fixing} (got ${ins.payment})`);
  });
  return problems.length ? { ok: false, problems } : { ok: true, file: f };
}

function buildCurves(f: QuotesFile): Record<string, DiscountCurve> {
  const out: Record<string, DiscountCurve> = {};
  for (const [ccy, c] of Object.entries(f.curves)) {
    out[ccy] =
      'flat' in c
        ? flatCurve(ccy, c.flat, `curves.${ccy}`)
        : makeCurve(
            { currency: ccy, times: c.times, zeroRates: c.zeroRates, discountFactors: c.discountFactors },
            `curves.${ccy}`,
          );
  }
  return out;
}

function describe(ins: Instrument): string {
  if (ins.id) return ins.id;
  switch (ins.kind) {
    case 'european':
      return `${ins.type} K=${ins.strike} T=${ins.expiry}`;
    case 'zero-bond-option':
      return `ZB ${ins.type} ${ins.expiry}y on ${ins.bondMaturity}y K=${ins.strike}`;
    case 'caplet':
      return `${ins.type}let ${ins.fixing}-${ins.payment} K=${ins.strike}`;
    case 'swaption':
      return `${ins.type} ${ins.expiry}y x ${ins.tenor}y K=${ins.strike}`;
  }
}

/** Prices every instrument of a validated file, in input order; engine errors become per-line errors. */
export function priceQuotes(f: QuotesFile): QuoteResult[] {
  const curves = buildCurves(f);
  const hwCache = new Map<string, HullWhiteModel>();
  const hwOf = (id: string, m: Extract<ModelSpec, { kind: 'hull-white' }>): HullWhiteModel => {
    let hw = hwCache.get(id);
    if (!hw) {
      hw = makeHullWhite(curves[m.curve]!, { a: m.a, sigma: m.sigma });
      hwCache.set(id, hw);
    }
    return hw;
  };
  return f.instruments.map((ins, index) => {
    const m = f.models[ins.model]!;
    const base: QuoteResult = {
      index,
      id: describe(ins),
      kind: ins.kind,
      model: ins.model,
      modelKind: m.kind,
    };
    try {
      if (ins.kind === 'european') {
        if (m.kind === 'hull-white') throw new Error('unreachable: checked in parseQuotesFile');
        const curve = curves[m.curve]!;
        const T = ins.expiry;
        const r = curve.zero(T);
        const q = m.divYield;
        let unit: number;
        if (m.kind === 'quanto') {
          const rf = curves[m.foreignCurve]!.zero(T);
          unit = quantoEuropean({
            type: ins.type,
            S: m.spot,
            K: ins.strike,
            T,
            rDomestic: r,
            rForeign: rf,
            q,
            volS: m.vol,
            volFx: m.fxVol,
            rho: m.rho,
            fixedFx: m.fixedFx,
          });
          // No implied vol column: a Black–Scholes vol on the payment curve would mix the quanto drift into the vol.
          return { ...base, price: unit * ins.quantity };
        }
        if (m.kind === 'black-scholes')
          unit = bsPrice({ type: ins.type, S: m.spot, K: ins.strike, T, r, q, vol: m.vol });
        else if (m.kind === 'heston')
          unit = hestonCos({
            type: ins.type,
            S: m.spot,
            K: ins.strike,
            T,
            r,
            q,
            params: { v0: m.v0, kappa: m.kappa, theta: m.theta, sigma: m.sigma, rho: m.rho },
          });
        else
          unit = bsHullWhite({
            type: ins.type,
            S: m.spot,
            K: ins.strike,
            T,
            q,
            curve,
            vol: m.vol,
            hw: { a: m.a, sigma: m.sigma },
            rho: m.rho,
          }).price;
        let iv: number | undefined;
        try {
          iv = bsImpliedVol({ type: ins.type, price: unit, S: m.spot, K: ins.strike, T, r, q });
        } catch {
          iv = undefined; // price carries no lognormal vol (e.g. at a bound): shown as '-'
        }
        return { ...base, price: unit * ins.quantity, impliedVol: iv, impliedVolKind: 'lognormal' };
      }
      if (m.kind !== 'hull-white') throw new Error('unreachable: checked in parseQuotesFile');
      const hw = hwOf(ins.model, m);
      const curve = curves[m.curve]!;
      if (ins.kind === 'zero-bond-option') {
        const unit = hw.zeroBondOption({
          type: ins.type,
          T: ins.expiry,
          S: ins.bondMaturity,
          strike: ins.strike,
        });
        return { ...base, price: unit * ins.notional };
      }
      if (ins.kind === 'caplet') {
        const tau = ins.payment - ins.fixing;
        const unit = hw.caplet({
          type: ins.type,
          T1: ins.fixing,
          T2: ins.payment,
          strike: ins.strike,
          accrual: tau,
        });
        const annuity = tau * curve.df(ins.payment);
        const F = curve.fwd(ins.fixing, ins.payment);
        const iv = safeNormalVol(
          ins.type === 'cap' ? 'call' : 'put',
          F,
          ins.strike,
          ins.fixing,
          unit,
          annuity,
        );
        return { ...base, price: unit * ins.notional, impliedVol: iv, impliedVolKind: 'normal' };
      }
      const n = Math.round(ins.tenor * ins.frequency);
      if (Math.abs(n - ins.tenor * ins.frequency) > 1e-9)
        throw new EngineError(
          'E_TENOR',
          `instruments[${index}].tenor must be a whole number of periods of 1/frequency (got ${ins.tenor})`,
        );
      const payTimes = Array.from({ length: n }, (_, k) => ins.expiry + (k + 1) / ins.frequency);
      const unit = hw.swaption({ type: ins.type, expiry: ins.expiry, payTimes, strike: ins.strike });
      const annuity = payTimes.reduce((s, t) => s + curve.df(t) / ins.frequency, 0);
      const par = (curve.df(ins.expiry) - curve.df(payTimes[n - 1]!)) / annuity;
      const iv = safeNormalVol(
        ins.type === 'payer' ? 'call' : 'put',
        par,
        ins.strike,
        ins.expiry,
        unit,
        annuity,
      );
      return { ...base, price: unit * ins.notional, impliedVol: iv, impliedVolKind: 'normal' };
    } catch (e) {
      return { ...base, error: `instruments[${index}]: ${toPlainError(e).message}` };
    }
  });
}

function safeNormalVol(
  type: 'call' | 'put',
  F: number,
  K: number,
  T: number,
  price: number,
  annuity: number,
): number | undefined {
  try {
    return bachelierImpliedVol({ type, F, K, T, price, annuity });
  } catch {
    return undefined;
  }
}

function fmtPrice(x: number): string {
  const a = Math.abs(x);
  if (a !== 0 && (a < 1e-4 || a >= 1e9)) return x.toExponential(6);
  return x.toFixed(6);
}

function fmtVol(r: QuoteResult): string {
  if (r.impliedVol === undefined) return '-';
  return r.impliedVolKind === 'normal'
    ? `${(r.impliedVol * 1e4).toFixed(2)} bp N`
    : `${(r.impliedVol * 100).toFixed(4)} %`;
}

/** Aligned text table: #, instrument, model, price, implied vol. */
export function formatTable(results: QuoteResult[]): string[] {
  const rows = results.map((r) => [
    String(r.index + 1),
    r.id,
    `${r.model} (${r.modelKind})`,
    r.error ? 'error' : fmtPrice(r.price!),
    r.error ? '' : fmtVol(r),
  ]);
  const head = ['#', 'instrument', 'model', 'price', 'implied vol'];
  const all = [head, ...rows];
  const w = head.map((_, j) => Math.max(...all.map((row) => row[j]!.length)));
  const right = [true, false, false, true, true];
  const line = (row: string[]) =>
    row
      .map((c, j) => (right[j] ? c.padStart(w[j]!) : c.padEnd(w[j]!)))
      .join('  ')
      .trimEnd();
  return [line(head), w.map((n) => '-'.repeat(n)).join('  '), ...rows.map(line)];
}

export async function run(args: string[], io: CliIo): Promise<number> {
  const json = args.includes('--json');
  const unknown = args.filter((a) => a.startsWith('-') && a !== '--json');
  const files = args.filter((a) => !a.startsWith('-'));
  if (unknown.length) {
    io.err(`factor-triage quote: unknown option ${unknown[0]}; options: --json`);
    return EXIT.badInput;
  }
  if (files.length !== 1) {
    io.err('factor-triage quote: give exactly one quotes file (usage: factor-triage quote FILE [--json])');
    return EXIT.badInput;
  }
  const file = files[0]!;
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    io.err(
      `factor-triage quote: cannot read ${file}${code === 'ENOENT' ? ': no such file' : code ? ` (${code})` : ''}`,
    );
    return EXIT.badInput;
  }
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    io.err(`factor-triage quote: ${file} is not valid JSON (${(e as Error).message})`);
    return EXIT.badInput;
  }
  const parsed = parseQuotesFile(data);
  if (!parsed.ok) {
    io.err(`factor-triage quote: ${file} has ${parsed.problems.length} problem(s):`);
    for (const p of parsed.problems) io.err(`  ${p}`);
    return EXIT.badInput;
  }
  const results = priceQuotes(parsed.file);
  const failed = results.filter((r) => r.error);
  if (json) {
    io.out(
      JSON.stringify(
        {
          format: QUOTE_RESULTS_FORMAT,
          source: file,
          name: parsed.file.name ?? null,
          results,
          note: CAUTION,
        },
        null,
        2,
      ),
    );
  } else {
    if (parsed.file.name) io.out(parsed.file.name);
    for (const l of formatTable(results)) io.out(l);
    io.out('');
    io.out(
      'Implied vols: lognormal (Black–Scholes, curve zero rate to expiry) for equity options; normal (bp) for caplets and swaptions.',
    );
    io.out(CAUTION);
  }
  for (const r of failed) io.err(`factor-triage quote: ${r.error}`);
  return failed.length ? EXIT.badInput : EXIT.ok;
}
