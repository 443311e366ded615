/**
 * The saved study file: schema check on load, canonical form, hash and bit-identity comparison.
 *
 * What the hash does: it is the SHA-256 of the canonical JSON of the whole file except the `hash` member, so any
 * edit after saving (a number, a verdict, an input) no longer matches and `verify` says so. What it does not do:
 * prove who wrote the file or when — anyone can recompute it after an edit. Authorship needs a signature kept
 * outside the file (e.g. a firm's document store), which this tool does not provide.
 */
import { z } from 'zod';
import { EngineError, issue, type FieldIssue } from '../errors.ts';
import { canonicalJson } from './canonical.ts';
import { sha256Hex } from './sha256.ts';
import { STUDY_FORMAT, type SavedStudy } from './types.ts';

/** SHA-256 (hex) of the canonical JSON of the study without its `hash` member. Timings are included. */
export function studyHash(saved: Omit<SavedStudy, 'hash'> | SavedStudy): string {
  const { hash: _omit, ...rest } = saved as SavedStudy;
  return sha256Hex(canonicalJson(rest));
}

/** Returns the study with its hash member set. */
export function sealStudy(s: Omit<SavedStudy, 'hash'>): SavedStudy {
  return { ...s, hash: studyHash(s) };
}

/** Whether the stored hash matches the content. */
export function checkStudyHash(saved: SavedStudy): { ok: boolean; stored: string; computed: string } {
  const computed = studyHash(saved);
  return { ok: computed === saved.hash, stored: saved.hash, computed };
}

function dropSeconds(v: unknown): unknown {
  if (Array.isArray(v)) return v.map(dropSeconds);
  if (v !== null && typeof v === 'object') {
    const out: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v as Record<string, unknown>))
      if (k !== 'seconds') out[k] = dropSeconds(x);
    return out;
  }
  return v;
}

/**
 * The part of a study that must be bit-identical on a re-run: everything but the hash and the wall-clock
 * timings (the `timings` section and every `seconds` field, e.g. each variant's calibration time).
 */
export function comparablePart(saved: SavedStudy): unknown {
  const { hash: _h, timings: _t, ...rest } = saved;
  return dropSeconds(JSON.parse(canonicalJson(rest)));
}

/** The first place two plain values differ, as a field path with both values; null when identical. */
export function firstDifference(
  a: unknown,
  b: unknown,
  path = '',
): { field: string; a: unknown; b: unknown } | null {
  if (Object.is(a, b)) return null;
  const here = path || '(root)';
  if (typeof a !== typeof b || a === null || b === null || typeof a !== 'object') {
    if (typeof a === 'number' && typeof b === 'number' && a === b) return null;
    return { field: here, a, b };
  }
  if (Array.isArray(a) !== Array.isArray(b)) return { field: here, a, b };
  if (Array.isArray(a) && Array.isArray(b)) {
    const n = Math.max(a.length, b.length);
    for (let i = 0; i < n; i++) {
      if (i >= a.length || i >= b.length) return { field: `${path}[${i}]`, a: a[i], b: b[i] };
      const d = firstDifference(a[i], b[i], `${path}[${i}]`);
      if (d) return d;
    }
    return null;
  }
  const ao = a as Record<string, unknown>;
  const bo = b as Record<string, unknown>;
  const keys = Array.from(new Set([...Object.keys(ao), ...Object.keys(bo)])).sort();
  for (const k of keys) {
    const d = firstDifference(ao[k], bo[k], path ? `${path}.${k}` : k);
    if (d) return d;
  }
  return null;
}

const num = z.number();
const valueSe = z.object({ value: num, se: num.nonnegative() });
const threshold = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('bp'), value: num.positive() }),
  z.object({ kind: z.literal('amount'), value: num.positive() }),
  z.object({ kind: z.literal('bidOffer'), fraction: num.positive(), width: num.positive() }),
]);
const factorId = z.enum(['stochVol', 'domesticRate', 'foreignRate']);
const decidingPart = z.enum(['stepHalving', 'calibration', 'repricing', 'exerciseGap', 'noise']);
const budgetParts = z.object({
  stepHalving: num.nonnegative(),
  calibration: num.nonnegative(),
  repricing: num.nonnegative().optional(),
  exerciseGap: num.nonnegative().nullable(),
});

/** Schema of the study settings (also used to validate settings given on the command line or by the app). */
export const settingsSchema = z.object({
  seed: z.union([z.string().min(1), z.number().int().nonnegative()]),
  paths: z.number().int().positive(),
  firstPaths: z.number().int().positive(),
  batchSize: z.number().int().positive(),
  maxStep: num.positive(),
  scheme: z.enum(['qe', 'euler']),
  alpha: num.gt(0).lt(0.5),
  spending: z.enum(['obrienFleming', 'pocock']),
  threshold,
  calibration: z.enum(['fair', 'naive']),
  greeks: z
    .object({
      spotBump: num.positive(),
      rateBump: num.positive(),
      volBump: num.positive(),
      deltaThreshold: num.positive(),
      vegaThreshold: num.positive(),
      rhoThreshold: num.positive(),
    })
    .nullable(),
  sweeps: z.object({ points: z.number().int().min(2).max(21) }).nullable(),
  localVol: z.boolean(),
  rules: z.object({
    rateCandidateMaturity: num.nonnegative(),
    terminationRateMaturity: num.nonnegative(),
    volCandidateMaturity: num.nonnegative(),
  }),
  extraCandidates: z.array(factorId),
  calibrationStrikes: z.record(z.string(), num.positive()),
  auxiliaryFraction: num.gt(0).lte(1),
  hestonRefit: z.enum(['analytic', 'monteCarlo']).optional(),
  perEquity: z.boolean().optional(),
});

const verdict = z.object({
  factor: factorId,
  status: z.enum(['required', 'candidate', 'notNeeded']),
  verdict: z.enum(['keep', 'drop', 'undecided', 'required', 'notNeeded']),
  decision: z.looseObject({ delta: num, se: num, budget: num, z: num, verdict: z.string() }).nullable(),
  decidedAtLook: z.number().int().nonnegative().nullable(),
  reason: z.string(),
});

const studySchema = z.object({
  format: z.literal(STUDY_FORMAT),
  tool: z.object({ name: z.string(), version: z.string() }),
  input: z.object({
    deal: z.looseObject({
      format: z.string(),
      name: z.string(),
      notional: num.positive(),
      currency: z.string(),
    }),
    markets: z.array(z.looseObject({ schema: z.string(), date: z.string(), domestic: z.string() })).min(1),
    settings: settingsSchema,
  }),
  analysis: z.looseObject({ format: z.string(), lastTime: num }),
  rules: z.object({
    factors: z.array(z.object({ factor: factorId, status: z.string(), reason: z.string() })),
    notes: z.array(z.string()),
  }),
  candidates: z.array(factorId),
  required: z.array(factorId),
  ladder: z
    .array(
      z.looseObject({
        id: z.string(),
        label: z.string(),
        mask: z.number().int().nonnegative(),
        role: z.enum(['ladder', 'localVol', 'naive']),
        spec: z.looseObject({ id: z.string(), domestic: z.string() }),
        calibration: z.looseObject({ rmseVol: num, fit: z.array(z.looseObject({ instrument: z.string() })) }),
      }),
    )
    .min(1),
  results: z.looseObject({
    looks: z.array(z.looseObject({ paths: z.number().int().positive() })).min(1),
    prices: z.array(valueSe),
    tau: num.positive(),
    // Recorded since the repricing part of the budget exists; files written before it load without them.
    budgetParts: z.record(z.string(), budgetParts).optional(),
    repricing: z
      .record(
        z.string(),
        z.object({
          volExcess: num.nonnegative(),
          instrument: z.string().nullable(),
          quotes: z.number().int().nonnegative(),
          capletNormalVolExcess: num.nonnegative().nullable(),
          inBudget: z.boolean().optional(),
        }),
      )
      .optional(),
    // Recorded since undecided verdicts say what would decide them; older files load without it.
    whatWouldDecide: z
      .record(
        z.string(),
        z.looseObject({
          side: z.enum(['keep', 'drop']),
          distance: num.nonnegative(),
          slack: num,
          largest: decidingPart.nullable(),
          items: z.array(
            z.looseObject({
              part: decidingPart,
              size: num.nonnegative(),
              room: num,
              remedy: z.string(),
              maxStep: num.positive().nullable().optional(),
              paths: z.number().int().positive().nullable().optional(),
              outerPaths: z.number().int().positive().nullable().optional(),
            }),
          ),
          summary: z.string(),
        }),
      )
      .optional(),
    // Recorded since the local-vol split has its step-halving check; older files load without it.
    localVol: z
      .looseObject({
        smile: valueSe,
        dynamics: valueSe,
        total: valueSe,
        stepHalving: z
          .looseObject({
            maxStep: num.positive(),
            paths: z.number().int().positive(),
            smile: valueSe,
            dynamics: valueSe,
            flagAbove: num.nonnegative(),
            flagged: z.array(z.enum(['smile', 'dynamics'])),
          })
          .optional(),
      })
      .nullable()
      .optional(),
    sweeps: z
      .array(
        z.looseObject({
          pair: z.string(),
          scheme: z.enum(['qe', 'euler']).optional(),
          schemeNote: z.string().optional(),
          basePoint: z.looseObject({ rho: num, price: valueSe }).optional(),
        }),
      )
      .optional(),
  }),
  verdicts: z.array(verdict),
  recommended: z.object({ factors: z.array(factorId), variant: z.string(), summary: z.string() }),
  warnings: z.array(z.string()),
  limitations: z.array(z.string()),
  timings: z.looseObject({ total: num.nonnegative() }),
  hash: z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lower-case hex digits (SHA-256)'),
});

function fieldPath(path: readonly PropertyKey[]): string {
  let s = 'study';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : `.${String(p)}`;
  return s;
}

/**
 * Parses a study file (already JSON-parsed). Refuses, with the field and the reason, anything that is not a
 * study of this format version. Does not check the hash (see {@link checkStudyHash}; `verifyStudy` does both).
 */
export function parseStudyFile(json: unknown): SavedStudy {
  if (json === null || typeof json !== 'object' || Array.isArray(json))
    throw new EngineError(
      'E_STUDY_SHAPE',
      'study file must be a JSON object with "format": "factor-triage/study@1"',
    );
  const fmt = (json as { format?: unknown }).format;
  if (fmt !== STUDY_FORMAT) {
    const i = issue(
      'E_STUDY_FORMAT',
      'study.format',
      `must be "${STUDY_FORMAT}"`,
      fmt,
      typeof fmt === 'string' && fmt.startsWith('factor-triage/study@')
        ? 'this file was written by another version of the tool'
        : 'this is not a saved study',
    );
    throw new EngineError(i.code, i.message, [i]);
  }
  const r = studySchema.safeParse(json);
  if (!r.success) {
    const issues: FieldIssue[] = r.error.issues.map((x) =>
      issue('E_STUDY_SHAPE', fieldPath(x.path), x.message, undefined),
    );
    const more = issues.length > 1 ? ` (and ${issues.length - 1} more)` : '';
    throw new EngineError(
      'E_STUDY_SHAPE',
      `invalid study file: ${issues[0]!.field} ${issues[0]!.rule}${more}`,
      issues,
    );
  }
  return json as SavedStudy;
}
