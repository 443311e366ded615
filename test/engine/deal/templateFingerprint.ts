/**
 * A fingerprint of one deal template: a hash of its compiled form (as JSON) and a hash of the bytes of the per-path
 * values the deal evaluator (with and without the detailed breakdown) gives on a fixed, seeded batch of hand-built
 * paths, plus a hash of its analysis. Two compilers or evaluators agree on a template bit for bit exactly when the fingerprints agree.
 */
import { createHash } from 'node:crypto';
import { checkDeal } from '../../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../../src/engine/deal/analyseDeal.ts';
import { makeDealRunner } from '../../../src/engine/deal/dealEvaluator.ts';
import { makeTestBatch } from './testPaths.ts';

export interface TemplateFingerprint {
  compiled: string;
  analysis: string;
  values: string;
}

const sha = (data: string | Uint8Array): string => createHash('sha256').update(data).digest('hex');

/** Fingerprint of a deal file (raw JSON value); throws when it does not compile. */
export function templateFingerprint(raw: unknown): TemplateFingerprint {
  const r = checkDeal(raw);
  if (!r.compiled) throw new Error(r.issues.map((i) => i.message).join('; '));
  const c = r.compiled;
  const batch = makeTestBatch({
    nPaths: 64,
    times: c.gridTimes,
    seed: `fingerprint-${c.name}`,
    domestic: c.currency,
    rate: 0.03,
    hw: { a: 0.05, sigma: 0.01 },
    foreignRates: { ASH: 0.02 },
    equities: [
      { name: 'ALDR', spot: 4200, vol: 0.22, divYield: 0.02 },
      { name: 'BRIX', spot: 980, vol: 0.3, divYield: 0.01 },
      {
        name: 'KESO',
        spot: 2350,
        vol: 0.25,
        divYield: 0.015,
        rate: 0.02,
        quanto: { fxVol: 0.09, rho: -0.3 },
      },
    ],
    fx: [{ name: 'ASH/DOM', spot: 1.37, vol: 0.09, domRate: 0.03, forRate: 0.02 }],
  });
  const runner = makeDealRunner(c);
  const total = runner.evaluate(batch);
  const d = runner.detailed(batch);
  const parts: Float64Array[] = [total, d.total, ...d.flows.map((f) => f.values)];
  for (const x of d.exercise) parts.push(x.value, x.alive, ...Object.values(x.features));
  const bytes = new Uint8Array(parts.reduce((s, p) => s + p.byteLength, 0));
  let o = 0;
  for (const p of parts) {
    bytes.set(new Uint8Array(p.buffer, p.byteOffset, p.byteLength), o);
    o += p.byteLength;
  }
  return {
    compiled: sha(JSON.stringify(c)),
    analysis: sha(JSON.stringify(analyseDeal(c))),
    values: sha(bytes),
  };
}
