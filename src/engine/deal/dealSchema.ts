/**
 * The deal file schema (zod). `parseDealFile` validates raw JSON and turns every problem into a field issue
 * (field path, rule, value, fix); expressions are checked afterwards by the payoff-language checker.
 */
import { z } from 'zod';
import { EngineError, issue, type FieldIssue } from '../errors.ts';
import { DEAL_FORMAT, type DealInput } from './types.ts';

/** Identifiers usable in expressions: a letter, then letters, digits or underscores. */
export const IDENT = /^[A-Za-z][A-Za-z0-9_]{0,39}$/;

const ident = z.string().regex(IDENT, 'must be a name: a letter, then letters, digits or _ (up to 40)');
const currency = z.string().regex(/^[A-Z]{3}$/, 'must be a three-letter currency code such as DOM');
const dateInput = z.union([z.string(), z.number().nonnegative()]);
const expr = z.string().min(1, 'must be a non-empty expression');

const conversion = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('compo') }).strict(),
  z.object({ kind: z.literal('quanto'), rate: z.number().positive() }).strict(),
]);

const payment = z
  .object({ amount: expr, currency: currency.optional(), conversion: conversion.optional() })
  .strict();

const underlying = z.discriminatedUnion('kind', [
  z
    .object({
      kind: z.literal('equity'),
      currency,
      marketName: z.string().min(1).optional(),
      initialLevel: z.number().positive().optional(),
    })
    .strict(),
  z
    .object({
      kind: z.literal('fx'),
      units: currency,
      per: currency,
      initialLevel: z.number().positive().optional(),
    })
    .strict(),
]);

const roll = z.enum(['none', 'following', 'modifiedFollowing', 'preceding']);

const schedule = z.union([
  z.object({ dates: z.array(dateInput).min(1), roll: roll.optional() }).strict(),
  z.object({ start: dateInput, end: dateInput, every: z.string(), roll: roll.optional() }).strict(),
]);

const calendar = z
  .object({
    holidays: z.array(z.string()).optional(),
    weekends: z.boolean().optional(),
  })
  .strict();

const event = z
  .object({
    label: z.string().optional(),
    on: ident,
    when: expr.optional(),
    pay: z.union([payment, z.array(payment)]).optional(),
    set: z.record(ident, expr).optional(),
    terminate: z.boolean().optional(),
  })
  .strict();

const exercise = z
  .object({
    label: z.string().optional(),
    on: ident,
    by: z.enum(['issuer', 'holder']),
    amount: expr,
    currency: currency.optional(),
    conversion: conversion.optional(),
  })
  .strict();

const history = z
  .object({
    fixings: z.record(z.string(), z.record(z.string(), z.number().finite().positive())).optional(),
    rates: z.record(z.string(), z.record(z.string(), z.number().finite().min(-1).max(10))).optional(),
  })
  .strict();

/** zod schema of a deal file (`format: factor-triage/deal@1`). */
export const dealSchema = z
  .object({
    format: z.literal(DEAL_FORMAT),
    name: z.string().min(1),
    description: z.string().optional(),
    valuationDate: z.string().optional(),
    notional: z.number().positive(),
    currency,
    underlyings: z.record(ident, underlying),
    rates: z.array(currency).optional(),
    parameters: z.record(ident, z.union([z.number(), z.string()])).optional(),
    schedules: z.record(ident, schedule),
    state: z.record(ident, z.number()).optional(),
    events: z.array(event).min(1),
    exercise: z.array(exercise).optional(),
    fundingSpread: z.number().min(-0.2).max(0.2).optional(),
    history: history.optional(),
    calendar: calendar.optional(),
  })
  .strict();

function fieldPath(path: readonly PropertyKey[]): string {
  let s = 'deal';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : `.${String(p)}`;
  return s;
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let v: unknown = root;
  for (const p of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[p as string];
  }
  return v;
}

/** Validates the shape of a deal file; returns the issues (empty when the shape is valid). */
export function dealShapeIssues(raw: unknown): FieldIssue[] {
  const r = dealSchema.safeParse(raw);
  if (r.success) return [];
  return r.error.issues.map((i) => {
    const extra =
      i.code === 'unrecognized_keys' ? `: remove ${(i as { keys?: string[] }).keys?.join(', ')}` : '';
    const field = fieldPath(i.path);
    return issue('E_DEAL_SHAPE', field, i.message + extra, valueAt(raw, i.path));
  });
}

/** Parses and validates the shape of a deal file; throws an EngineError listing every issue. */
export function parseDealFile(raw: unknown): DealInput {
  const issues = dealShapeIssues(raw);
  if (issues.length > 0) {
    const more = issues.length > 1 ? ` (and ${issues.length - 1} more)` : '';
    throw new EngineError('E_DEAL_SHAPE', issues[0]!.message + more, issues);
  }
  return raw as DealInput;
}
